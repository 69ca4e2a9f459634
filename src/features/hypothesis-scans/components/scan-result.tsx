import type { HypothesisScan, HypothesisScanResult } from '@shared/schemas/hypothesis-scan';
import { Badge } from '../../../components/ui/badge';
import { Panel } from '../../../components/ui/page';
import { formatCount } from '../../../lib/format';
import { formatFixed, formatProbability } from '../../../lib/stats-format';
import { LimitChart } from './limit-chart';
import { LocalP0Chart } from './local-p0-chart';
import { ScanPointsTable } from './scan-points-table';

const at = (result: HypothesisScanResult, value: number) => `${formatFixed(value, 1)}${result.parameter.unit ? ` ${result.parameter.unit}` : ''}`;

/**
 * The answer to "is there an excess anywhere, how significant once we account for having looked
 * at every hypothesis, and which hypotheses do the data exclude?": the largest local excess and
 * its global significance with their errors and toy counts, then p0 and the limits against the
 * hypothesis value, then every hypothesis's numbers.
 */
export function ScanResult({ scan, result }: { scan: HypothesisScan; result: HypothesisScanResult }) {
  const converged = result.points.filter((p) => p.status === 'converged').length;
  const failed = result.points.length - converged;
  const g = result.global;
  return (
    <div className="flex flex-col gap-5">
      <section aria-label="What the scan says" className="grid gap-4 lg:grid-cols-2">
        <Panel title={result.dataset === 'observed' ? 'Largest local excess' : 'Expected sensitivity'}>
          <div className="flex flex-wrap items-center gap-2 text-xs">
            <Badge tone={failed ? 'amber' : 'teal'} title="Each hypothesis is a fit of its own; a failed one shows no number">
              {converged} of {result.points.length} hypotheses converged
            </Badge>
            {result.warnings.length > 0 && <Badge tone="amber">{result.warnings.length} warning{result.warnings.length > 1 ? 's' : ''}</Badge>}
          </div>
          {result.dataset === 'observed' ? (
            g ? (
              <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
                <dt className="text-ink-muted">At</dt>
                <dd className="font-medium tabular-nums">
                  {result.parameter.name} = {at(result, g.at.value)}
                </dd>
                <dt className="text-ink-muted">Local</dt>
                <dd className="tabular-nums">
                  Z = {formatFixed(g.at.z, 2)}σ, p0 = {formatProbability(g.at.p0)} (q0 = {formatFixed(g.at.q0, 2)})
                </dd>
              </dl>
            ) : (
              <p className="mt-3 text-sm text-ink-muted">No hypothesis shows an excess (every converged μ̂ ≤ 0, or none converged): there is no global significance to give.</p>
            )
          ) : (
            <p className="mt-3 text-sm text-ink-soft">
              An expected scan: Asimov datasets built on the control regions’ fit, with the signal of each hypothesis at μ = 1 for the expected significance and without it for the
              expected limits. No observed count of a signal region was read; the observed scan and the global significance follow unblinding.
            </p>
          )}
        </Panel>
        {g && (
          <Panel title="Global significance">
            <p className="mb-2 text-xs text-ink-muted">Corrected for having looked at {result.points.length} hypotheses (the look-elsewhere effect).</p>
            <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
              <dt className="text-ink-muted">From upcrossings</dt>
              <dd className="tabular-nums">
                Z = {formatFixed(g.upcrossingEstimate.z, 2)}σ, p = {formatProbability(g.upcrossingEstimate.p)} ± {formatProbability(g.upcrossingEstimate.pError)}
                <span className="block text-xs text-ink-muted">
                  {g.upcrossings.toys
                    ? `⟨N⟩ = ${formatFixed(g.upcrossings.toys.mean, 2)} ± ${formatFixed(g.upcrossings.toys.error, 2)} upcrossings of q0 = ${formatFixed(g.referenceLevel, 2)} on ${formatCount(g.upcrossings.toys.count)} background-only pseudo-experiments`
                    : `${g.upcrossings.observed} upcrossing${g.upcrossings.observed === 1 ? '' : 's'} of q0 = ${formatFixed(g.referenceLevel, 2)} along the observed scan (error √N)`}
                  ; trials factor {formatFixed(g.upcrossingEstimate.trialsFactor, 1)}. Gross &amp; Vitells, Eur. Phys. J. C 70 (2010) 525.
                </span>
              </dd>
              <dt className="text-ink-muted">From toys</dt>
              <dd className="tabular-nums">
                {g.fromToys ? (
                  <>
                    {g.fromToys.z === null ? 'Z beyond reach' : `Z = ${formatFixed(g.fromToys.z, 2)}σ`}, p = {formatProbability(g.fromToys.p)} ± {formatProbability(g.fromToys.pError)}
                    <span className="block text-xs text-ink-muted">
                      {formatCount(g.fromToys.exceeding)} of {formatCount(g.fromToys.count)} background-only pseudo-experiments have a largest local q0 of at least {formatFixed(g.at.q0, 2)}
                    </span>
                  </>
                ) : (
                  <span className="text-ink-muted">not asked for (start a scan with trials-factor toys)</span>
                )}
              </dd>
            </dl>
          </Panel>
        )}
      </section>
      {result.warnings.length > 0 && (
        <ul className="flex flex-col gap-1 rounded-md border border-amber/40 bg-amber-soft px-3 py-2 text-xs text-amber-ink" aria-label="Warnings of the scan">
          {result.warnings.map((w) => (
            <li key={w}>{w}</li>
          ))}
        </ul>
      )}
      <div className="grid gap-5 2xl:grid-cols-2">
        <LocalP0Chart result={result} />
        {scan.options.limit && <LimitChart result={result} />}
      </div>
      <section aria-labelledby="scan-points-heading">
        <h2 id="scan-points-heading" className="mb-2 text-base font-semibold text-ink">
          Every hypothesis
        </h2>
        <ScanPointsTable result={result} />
      </section>
    </div>
  );
}
