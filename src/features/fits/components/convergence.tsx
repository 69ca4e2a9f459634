import { useState } from 'react';
import type { FitResultHead } from '@shared/schemas/fits';
import { ConvergenceBadge } from '../../../components/status/convergence-badge';
import { formatCompact } from '../../../lib/stats-format';

type Convergence = FitResultHead['convergence'];

/** Above this the fit's Hessian is close to singular and the errors deserve a second look (a rule of thumb). */
const CONDITION_WARN = 1e6;

/**
 * The convergence line shown above every result view: status, iterations, final decrement,
 * condition number, and the warnings, always in view next to the numbers.
 */
export function ConvergenceStrip({ result }: { result: FitResultHead }) {
  const c = result.convergence;
  const [open, setOpen] = useState(false);
  const issues = c.warnings.length + (c.parametersAtBound.length ? 1 : 0) + (c.clippedBins.length ? 1 : 0);
  return (
    <div className="flex flex-col gap-1">
      <div className="flex flex-wrap items-center gap-x-4 gap-y-1 text-xs text-ink-soft">
        <ConvergenceBadge status={result.status} />
        <span title="Newton iterations the minimiser took">
          <span className="text-ink-muted">iterations</span> <span className="tabular-nums">{c.iterations}</span>
        </span>
        <span title="Newton decrement gᵀH⁻¹g/2 at the last point: the expected fall of the NLL in one more step">
          <span className="text-ink-muted">final decrement</span> <span className="tabular-nums">{formatCompact(c.decrement)}</span>
        </span>
        <span
          title="Condition number of the (μ, k, θ) Hessian scaled to unit diagonal: large values mean near-degenerate parameters"
          className={c.conditionNumber !== null && c.conditionNumber > CONDITION_WARN ? 'font-semibold text-amber-ink' : ''}
        >
          <span className="text-ink-muted">condition number</span> <span className="tabular-nums">{formatCompact(c.conditionNumber)}</span>
        </span>
        <span title="Wall-clock time of the fit on the server">
          <span className="text-ink-muted">time</span> <span className="tabular-nums">{c.seconds.toFixed(1)} s</span>
        </span>
        {issues > 0 ? (
          <button type="button" onClick={() => setOpen((o) => !o)} aria-expanded={open} className="rounded font-semibold text-amber-ink underline-offset-2 hover:underline">
            {issues} warning{issues === 1 ? '' : 's'} {open ? '▴' : '▾'}
          </button>
        ) : (
          <span className="text-ink-muted">no warnings</span>
        )}
      </div>
      {issues > 0 && (
        <ul aria-label="Warnings" className={`flex flex-col gap-0.5 text-xs text-amber-ink ${open ? '' : 'sr-only'}`}>
          {c.parametersAtBound.length > 0 && <li>At a bound: {c.parametersAtBound.join(', ')}</li>}
          {c.clippedBins.length > 0 && <li>{c.clippedBins.length} bin yield{c.clippedBins.length === 1 ? '' : 's'} clipped at zero (see the convergence report)</li>}
          {c.warnings.map((w, i) => (
            <li key={i}>{w}</li>
          ))}
        </ul>
      )}
    </div>
  );
}

/** The convergence report in full: every number the minimiser reported, each with its meaning. */
export function ConvergenceReport({ convergence: c, status }: { convergence: Convergence; status: FitResultHead['status'] }) {
  return (
    <div className="flex flex-col gap-3">
      {c.failure && (
        <p role="alert" className="rounded-md border border-danger/30 bg-danger-soft/60 px-3 py-2 text-sm text-danger">
          {c.failure}
        </p>
      )}
      <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
        <dt className="text-ink-muted">Status</dt>
        <dd>
          <ConvergenceBadge status={status} />
        </dd>
        <dt className="text-ink-muted">Iterations</dt>
        <dd className="tabular-nums" title="Newton iterations">
          {c.iterations}
        </dd>
        <dt className="text-ink-muted">Final decrement</dt>
        <dd className="tabular-nums" title="Newton decrement gᵀH⁻¹g/2 at the last point; the fit stops below 1e-9">
          {formatCompact(c.decrement)}
        </dd>
        <dt className="text-ink-muted">NLL at the minimum</dt>
        <dd className="tabular-nums" title="Negative log-likelihood at the last point (offset so that a perfect fit gives 0)">
          {formatCompact(c.nll)}
        </dd>
        <dt className="text-ink-muted">Condition number</dt>
        <dd className="tabular-nums" title="Of the (μ, k, θ) Hessian scaled to unit diagonal; large values mean parameters the data cannot tell apart">
          {formatCompact(c.conditionNumber)}
        </dd>
        <dt className="text-ink-muted">Time</dt>
        <dd className="tabular-nums" title="Wall-clock seconds on the server">
          {c.seconds.toFixed(2)} s
        </dd>
        <dt className="text-ink-muted">Parameters at a bound</dt>
        <dd title="Parameters whose best fit sits on the edge of their allowed range; their errors are one-sided">
          {c.parametersAtBound.length ? c.parametersAtBound.join(', ') : <span className="text-ink-muted">none</span>}
        </dd>
        <dt className="text-ink-muted">Clipped bins</dt>
        <dd title="Bins where a process's expected yield went negative and was clipped to zero">
          {c.clippedBins.length ? (
            <ul className="text-xs">
              {c.clippedBins.slice(0, 30).map((b, i) => (
                <li key={i}>
                  {b.region}, bin {b.bin + 1}, {b.process}
                </li>
              ))}
              {c.clippedBins.length > 30 && <li>… and {c.clippedBins.length - 30} more</li>}
            </ul>
          ) : (
            <span className="text-ink-muted">none</span>
          )}
        </dd>
        <dt className="text-ink-muted">Warnings</dt>
        <dd>
          {c.warnings.length ? (
            <ul className="list-disc pl-4 text-sm text-amber-ink">
              {c.warnings.map((w, i) => (
                <li key={i}>{w}</li>
              ))}
            </ul>
          ) : (
            <span className="text-ink-muted">none</span>
          )}
        </dd>
      </dl>
    </div>
  );
}
