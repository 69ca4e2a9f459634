import type { FitResultHead } from '@shared/schemas/fits';
import { ScanChart } from '../../../components/charts/scan-chart';
import { DefinitionRow } from '../../../components/ui/definition-row';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { decimalsFor, formatFixed, formatProbability, formatSigma, formatSigned } from '../../../lib/stats-format';
import { ConvergenceReport } from './convergence';
import { PoiPanel } from './poi-panel';

type Parameter = FitResultHead['parameters'][number];

const norm = dataColumns<Parameter>();
const normColumns = [
  norm.accessor('name', {
    header: 'Normalisation',
    cell: (c) => {
      const p = c.row.original;
      return (
        <>
          {p.label || p.name} <span className="font-mono text-2xs text-ink-muted">{p.name}</span>
          {p.atBound && <span className="ml-1 text-xs font-semibold text-amber-ink">at a bound</span>}
          {p.fixed && <span className="ml-1 text-xs text-ink-muted">held</span>}
        </>
      );
    },
  }),
  norm.accessor('value', {
    header: 'Best fit',
    meta: { numeric: true, cellTitle: 'Best-fit scale factor of the processes it multiplies (1 = nominal)' },
    cell: (c) => formatFixed(c.getValue(), 3),
  }),
  norm.accessor('error', { header: 'σ', meta: { numeric: true, cellTitle: '√V from the covariance' }, cell: (c) => formatFixed(c.getValue(), 3) }),
];

/** μ̂ with its 68 % errors: the scan's crossings when there is a scan, else ±σ_μ from the covariance. */
export function MuHeadline({ result }: { result: FitResultHead }) {
  const mu = result.summary!.mu;
  const dec = decimalsFor(mu.error);
  if (mu.fixed)
    return (
      <p className="text-lg" title="μ was held at this value (control regions only), not fitted">
        μ held at <span className="font-semibold tabular-nums">{formatFixed(mu.value, 3)}</span>
      </p>
    );
  const i68 = mu.interval68;
  const asym = i68 && i68.low !== null && i68.high !== null;
  return (
    <p className="flex flex-wrap items-baseline gap-x-2 text-ink">
      <span className="text-sm text-ink-muted">μ̂ =</span>
      <span className="text-3xl font-semibold tabular-nums" title="Best-fit signal strength, in multiples of the nominal signal">
        {formatFixed(mu.value, dec)}
      </span>
      {asym ? (
        <span className="inline-flex flex-col text-sm leading-tight tabular-nums" title="68 % interval from the profile-likelihood scan (where q = 1), as offsets from μ̂">
          <span>{formatSigned(i68.high, dec)}</span>
          <span>{formatSigned(i68.low, dec)}</span>
        </span>
      ) : (
        <span className="text-lg tabular-nums" title="σ_μ = √V_μμ from the covariance at the minimum (symmetric; run a scan for asymmetric errors)">
          ± {formatFixed(mu.error, dec)}
        </span>
      )}
      <span className="text-xs text-ink-muted">{asym ? '68 % interval from the scan' : '±σ_μ from the covariance'}</span>
    </p>
  );
}

/** The headline numbers of a converged fit, each with its meaning on hover. */
export function SummaryView({ result }: { result: FitResultHead }) {
  const s = result.summary!;
  const mu = s.mu;
  const dec = decimalsFor(mu.error);
  const i95 = mu.interval95;
  const lim = s.limit;
  const asimov = result.data.dataset === 'asimov';
  return (
    <div className="flex flex-col gap-4">
      <div className="grid gap-4 lg:grid-cols-2">
        <Panel title="Signal strength">
          <MuHeadline result={result} />
          {!mu.fixed && (
            <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
              <DefinitionRow label="σ_μ" title="√V_μμ: the symmetric error from the covariance at the minimum">
                {formatFixed(mu.error, dec)}
              </DefinitionRow>
              <DefinitionRow label="95 % interval" title="Where the scan crosses q = 3.84 (absolute values of μ)">
                {i95 && i95.low !== null && i95.high !== null ? `[${formatFixed(mu.value + i95.low, dec)}, ${formatFixed(mu.value + i95.high, dec)}]` : <span className="text-ink-muted">needs a scan</span>}
              </DefinitionRow>
              <DefinitionRow label="Statistical part" title="σ_μ with every nuisance parameter and γ held at its best fit (μ and the normalisations free)">
                ± {formatFixed(mu.stat, dec)}
              </DefinitionRow>
              <DefinitionRow label="Systematic part" title="√(σ_μ² − σ_stat²): what the nuisance parameters add">
                ± {formatFixed(mu.syst, dec)}
              </DefinitionRow>
            </dl>
          )}
        </Panel>

        <Panel title="Significance and limit">
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
            <DefinitionRow
              label={asimov ? 'Significance (this Asimov dataset)' : 'Observed significance'}
              title="Z = √q₀ with q₀ = 2[NLL(μ = 0) − NLL(μ̂)], in standard deviations; 0 when μ̂ ≤ 0"
            >
              {s.discovery ? (
                <>
                  {formatSigma(s.discovery.z)} <span className="text-ink-muted">(p₀ = {formatProbability(s.discovery.p0)})</span>
                </>
              ) : (
                <span className="text-ink-muted">not computed</span>
              )}
            </DefinitionRow>
            <DefinitionRow label="Expected significance" title="Z on the pre-fit Asimov dataset at the μ shown, in standard deviations; p₀ is its one-sided p-value">
              {s.expected ? (
                <>
                  {formatSigma(s.expected.z)} <span className="text-ink-muted">(p₀ = {formatProbability(s.expected.p0)}, Asimov μ = {formatFixed(s.expected.asimovMu, 2)})</span>
                </>
              ) : (
                <span className="text-ink-muted">not asked for</span>
              )}
            </DefinitionRow>
            {lim ? (
              <>
                <DefinitionRow label={`${Math.round(lim.cl * 100)} % CL limit (observed)`} title="CLs upper limit on μ with the asymptotic q̃_μ distributions, in multiples of the nominal signal">
                  {lim.observed === null ? <span className="text-ink-muted">outside the μ range</span> : `μ < ${formatFixed(lim.observed, 3)}`}
                </DefinitionRow>
                <DefinitionRow label="Expected limit" title="Median expected limit from the background-only Asimov dataset">
                  {lim.expected.median === null ? '–' : `μ < ${formatFixed(lim.expected.median, 3)}`}
                </DefinitionRow>
                <DefinitionRow label="±1σ band" title="Expected limit if the background-only data fluctuated by ∓1σ">
                  [{formatFixed(lim.expected.minus1, 3)}, {formatFixed(lim.expected.plus1, 3)}]
                </DefinitionRow>
                <DefinitionRow label="±2σ band" title="Expected limit if the background-only data fluctuated by ∓2σ">
                  [{formatFixed(lim.expected.minus2, 3)}, {formatFixed(lim.expected.plus2, 3)}]
                </DefinitionRow>
              </>
            ) : (
              <DefinitionRow label="Upper limit" title="Ask for a CLs limit when running the fit">
                <span className="text-ink-muted">not asked for</span>
              </DefinitionRow>
            )}
            <DefinitionRow label="Goodness of fit" title="Saturated-model statistic t = 2Σ[ν − n + n ln(n/ν)] at the best fit, with its χ² p-value for the degrees of freedom shown">
              t = {formatFixed(s.goodnessOfFit.t, 2)} for {s.goodnessOfFit.dof} dof, p = {formatProbability(s.goodnessOfFit.p)}
            </DefinitionRow>
          </dl>
        </Panel>
      </div>

      {result.poi && result.poi.list.length > 0 && <PoiPanel result={result} />}

      {!result.poi?.list.length && result.scan && result.scan.points.length > 1 && (
        <Panel>
          <ScanChart scan={result.scan} parameterLabel={result.scan.parameter === 'mu' ? 'μ' : result.scan.parameter} />
        </Panel>
      )}

      <NormsAndConvergence result={result} />
    </div>
  );
}

/** The floating normalisations and the convergence report, under every summary. */
function NormsAndConvergence({ result }: { result: FitResultHead }) {
  const norms = result.parameters.filter((p) => p.kind === 'normalisation');
  return (
    <div className="grid gap-4 lg:grid-cols-2">
      <Panel title="Floating normalisations">
        {norms.length === 0 ? (
          <p className="text-sm text-ink-muted">This model has no floating normalisation.</p>
        ) : (
          <DataTable columns={normColumns} data={norms} getRowId={(p) => p.name} label="Floating normalisations" frame="plain" />
        )}
      </Panel>
      <Panel title="Convergence report">
        <ConvergenceReport convergence={result.convergence} status={result.status} />
        <p className="mt-2 text-xs text-ink-muted">
          {result.gammas.count} bin-by-bin template-statistics parameters (γ) were fitted
          {result.gammas.maxAbsPull !== null ? `; the largest |pull| among them is ${formatFixed(result.gammas.maxAbsPull, 2)}` : ''}.
        </p>
      </Panel>
    </div>
  );
}

/**
 * The summary of a fit with μ hidden (docs/likelihood.md §9.6): nothing computed from μ̂ or from
 * the signal regions' data is sent, so there is no μ̂ to show, and the page says so.
 */
export function HiddenMuSummary({ result }: { result: FitResultHead }) {
  return (
    <div className="flex flex-col gap-4">
      <Panel title="Signal strength: hidden">
        <p className="text-sm text-ink">
          μ was fitted to the observed data of every region, and is not shown. Nothing computed from μ̂ or from the signal regions’ data leaves the server: no μ̂, interval,
          scan, significance, limit, impacts on μ, grouped impacts or goodness of fit.
        </p>
        <p className="mt-1 text-sm text-ink-soft">Read the pulls and constraints of the nuisance parameters, their correlations, and the control regions’ distributions.</p>
      </Panel>
      <NormsAndConvergence result={result} />
    </div>
  );
}
