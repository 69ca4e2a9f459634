import { useSearchParams } from 'react-router';
import type { FitPart, FitResultHead } from '@shared/schemas/fits';
import { Panel, tableClass, tdClass, thClass } from '../../../components/ui/page';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import { groupName, impactMode, impactSize, isStronglyPulled, labelsOf, rankByImpact } from '../result-helpers';
import { ConvergenceReport } from './convergence';
import { ConstraintMeter, ImpactGlyph, PullGlyph } from './glyphs';
import { impactScale } from './impact-table';

function Num({ label, title, children }: { label: string; title: string; children: React.ReactNode }) {
  return (
    <>
      <dt className="text-ink-muted">{label}</dt>
      <dd className="tabular-nums" title={title}>
        {children}
      </dd>
    </>
  );
}

/** One parameter's numbers from the stored result: pull, constraint, impacts and where its information comes from. */
function ParameterNumbers({ result, information, name }: { result: FitResultHead; information: FitPart<'information'>; name: string }) {
  const n = result.nuisance.find((x) => x.name === name);
  const p = result.parameters.find((x) => x.name === name);
  const info = information.find((x) => x.parameter === name);
  if (!n && !p) return <p className="text-sm text-danger">There is no parameter “{name}” in this result.</p>;
  const mode = impactMode(result);
  const ranked = rankByImpact(
    result.nuisance.filter((x) => !x.fixed),
    mode,
  );
  const rank = n ? ranked.findIndex((x) => x.name === n.name) + 1 : 0;
  const scale = impactScale(ranked, mode);
  const label = p?.label;
  return (
    <div className="flex flex-col gap-4">
      <div className="grid gap-4 lg:grid-cols-2">
        <Panel title={<span>{label && label !== name ? `${label} ` : ''}<span className="font-mono text-xs font-normal text-ink-muted">{name}</span></span>}>
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
            <Num label="Group" title="The register group of this systematic">
              {groupName(n?.group ?? p?.group ?? null)}
            </Num>
            <Num label="Best fit θ̂" title="In units of the prior width (0 = nominal, ±1 = the supplied variations)">
              {formatSigned(p?.value ?? n?.pull ?? null, 3)}
            </Num>
            {n && (
              <>
                <Num label="Pull" title="(θ̂ − 0)/1">
                  <span className="flex items-center gap-2">
                    <PullGlyph n={n} /> {formatSigned(n.pull, 3)}
                    {isStronglyPulled(n) && <span className="text-xs font-semibold text-plum">strongly pulled</span>}
                  </span>
                </Num>
                <Num label="Constraint" title="σ̂/1: post-fit width over prior width">
                  <span className="flex items-center gap-2">
                    <ConstraintMeter n={n} threshold={result.options.overConstraintThreshold} /> {formatFixed(n.constraint, 3)}
                    {n.overConstrained && <span className="text-xs font-semibold text-amber-ink">over-constrained (below {result.options.overConstraintThreshold})</span>}
                  </span>
                </Num>
                <Num label="Normalised pull" title="θ̂/√(1 − σ̂²) when σ̂ < 1">
                  {formatSigned(n.normalisedPull, 3)}
                </Num>
                <Num label="Quick impact" title="ρ(μ, θ)·σ_μ from the covariance, in units of μ">
                  {formatSigned(n.quickImpact, 4)}
                </Num>
                <Num label="Post-fit impact" title="Δμ with θ fixed at θ̂ + σ̂ / θ̂ − σ̂, all else refitted">
                  {n.postfitImpact ? `${formatSigned(n.postfitImpact.up, 4)} / ${formatSigned(n.postfitImpact.down, 4)}` : <span className="text-ink-muted">not computed (full impacts)</span>}
                </Num>
                <Num label="Pre-fit impact" title="Δμ with θ fixed at θ̂ + 1 / θ̂ − 1, all else refitted">
                  {n.prefitImpact ? `${formatSigned(n.prefitImpact.up, 4)} / ${formatSigned(n.prefitImpact.down, 4)}` : <span className="text-ink-muted">not computed (full impacts)</span>}
                </Num>
                {mode !== 'none' && (
                  <Num label="Rank" title={`By ${mode === 'postfit' ? 'post-fit' : 'quick'} impact among the free nuisance parameters`}>
                    {rank > 0 && impactSize(n, mode) !== null ? `${rank} of ${ranked.length}` : '–'}
                  </Num>
                )}
              </>
            )}
          </dl>
          {n?.postfitImpact && (
            <div className="mt-2">
              <ImpactGlyph up={n.postfitImpact.up} down={n.postfitImpact.down} preUp={n.prefitImpact?.up} preDown={n.prefitImpact?.down} scale={scale} />
            </div>
          )}
        </Panel>
        <Panel title="Information breakdown">
          {info ? (
            <div className="flex flex-col gap-2">
              <p className="text-sm text-ink-soft">
                Without correlations the data would leave this parameter a width of{' '}
                <strong className="tabular-nums" title="1/√(total information)">
                  {formatFixed(info.width, 3)}
                </strong>
                {n?.constraint != null && (
                  <>
                    {' '}
                    against the fitted <strong className="tabular-nums">{formatFixed(n.constraint, 3)}</strong>
                    {n.constraint < info.width - 0.01 ? ': correlations with other parameters narrow it further.' : '.'}
                  </>
                )}
              </p>
              <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-0.5 text-sm">
                <Num label="Total information" title="Σ over bins of (∂ν/∂θ)²/ν, plus 1 from the prior">
                  {formatFixed(info.total, 3)}
                </Num>
                <Num label="From the prior" title="The constraint term contributes 1">
                  {formatFixed(info.constraint, 3)}
                </Num>
              </dl>
              <table className={tableClass} aria-label={`Information of ${name} by region`}>
                <thead>
                  <tr>
                    <th scope="col" className={thClass}>
                      Region
                    </th>
                    <th scope="col" className={`${thClass} text-right`}>
                      Information
                    </th>
                    <th scope="col" className={`${thClass} text-right`}>
                      Share
                    </th>
                    <th scope="col" className={thClass}>
                      Bins carrying most
                    </th>
                  </tr>
                </thead>
                <tbody>
                  {[...info.regions]
                    .sort((a, b) => b.information - a.information)
                    .map((r) => (
                      <tr key={r.region}>
                        <td className={`${tdClass} font-mono text-xs whitespace-nowrap`}>{r.region}</td>
                        <td className={`${tdClass} text-right tabular-nums`} title="Σ over the region's bins of (∂ν/∂θ)²/ν at the best fit">
                          {formatFixed(r.information, 4)}
                        </td>
                        <td className={`${tdClass} text-right tabular-nums`} title="Of the total, prior included">
                          {Math.round((r.information / info.total) * 100)} %
                        </td>
                        <td className={`${tdClass} text-xs`}>
                          {[...r.bins]
                            .sort((a, b) => b.information - a.information)
                            .slice(0, 4)
                            .map((b) => `bin ${b.bin + 1} (${formatFixed(b.information, 3)})`)
                            .join(', ') || '–'}
                        </td>
                      </tr>
                    ))}
                </tbody>
              </table>
            </div>
          ) : (
            <p className="text-sm text-ink-muted">No information breakdown for this parameter in the result.</p>
          )}
        </Panel>
      </div>
      <p className="rounded-md border border-dashed border-rule-strong bg-paper-raised/60 px-3 py-2 text-xs text-ink-muted">
        The full diagnosis panel is still being built: the parameter's variations against the data's statistical precision per bin, its own likelihood scan and the questions raised
        on it will appear here. The numbers above are the stored result's.
      </p>
    </div>
  );
}

/** The diagnostics view: one parameter's numbers (chosen here or by a click in the impact ranking) and the convergence report in full. */
export function DiagnosticsView({ result, information }: { result: FitResultHead; information: FitPart<'information'> }) {
  const [params, setParams] = useSearchParams();
  const name = params.get('parameter');
  const labels = labelsOf(result);
  const choices = [...result.nuisance.map((n) => n.name)].sort((a, b) => a.localeCompare(b));
  return (
    <div className="flex flex-col gap-4">
      <div className="flex flex-col gap-1">
        <label htmlFor="diag-parameter" className="text-xs font-semibold text-ink-soft">
          Parameter
        </label>
        <select
          id="diag-parameter"
          value={name ?? ''}
          onChange={(e) => setParams(e.target.value ? { parameter: e.target.value } : {}, { replace: true })}
          className="max-w-md rounded-md border border-rule-strong bg-paper-raised px-2 py-1.5 text-sm"
        >
          <option value="">Choose a nuisance parameter…</option>
          {choices.map((c) => (
            <option key={c} value={c}>
              {c}
              {labels.get(c) && labels.get(c) !== c ? ` (${labels.get(c)})` : ''}
            </option>
          ))}
        </select>
      </div>
      {name && <ParameterNumbers result={result} information={information} name={name} />}
      <Panel title="Convergence report">
        <ConvergenceReport convergence={result.convergence} status={result.status} />
      </Panel>
    </div>
  );
}
