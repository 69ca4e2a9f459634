import { useCallback, useEffect, useMemo, useRef, useState, type ReactNode } from 'react';
import { Link } from 'react-router';
import type { Model } from '@shared/schemas/api';
import type { NuisanceReport } from '@shared/schemas/fit';
import type { FitPart, FitResultHead } from '@shared/schemas/fits';
import type { Diagnosis, DiagnosisClaim, DiagnosisRegion } from '@shared/schemas/review';
import { fitRegionChart } from '../../../components/charts/fit-region-chart';
import { ConstraintMeter, ImpactRange, PullMeter } from '../../../components/charts/parameter-glyphs';
import { ScanChart } from '../../../components/charts/scan-chart';
import { StackedChart } from '../../../components/charts/stacked-chart';
import { ConvergenceBadge } from '../../../components/status/convergence-badge';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { DefinitionRow } from '../../../components/ui/definition-row';
import { diagnosisPath, fitName, groupName, isStronglyPulled } from '../../../lib/fits';
import { formatEdge } from '../../../lib/format';
import { correlationColour, theme } from '../../../lib/palette';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import { DiagnosisChecks } from './diagnosis-checks';
import { formatShare, ShareBars, type ShareItem } from './share-bars';
import { VariationChart, VariationTable } from './variation-chart';

export type Evidence = DiagnosisClaim['evidence'];

/** The id of the panel element a summary sentence rests on. */
export const evidenceId = (e: Evidence) => `diagnosis-${e}`;

/** How many regions get their own bin chart and highlighted distribution. */
const REGIONS_SHOWN = 2;
/** How many bins the list of information-carrying bins names. */
const BINS_LISTED = 10;

/** The tolerance around 1 within which σ̂ / width says "the data alone explain the constraint". */
const NEAR_ONE = 0.15;

/** Plain words for σ̂ against the width with no correlations, 1/√(total information). */
export function widthWords(error: number | null, width: number): string {
  if (error === null) return 'The parameter has no post-fit width in this fit, so there is nothing to compare.';
  const r = error / width;
  if (Math.abs(r - 1) <= NEAR_ONE)
    return `The post-fit width is ${formatFixed(r, 2)} times the width the data alone would give: the information in the bins below explains the constraint.`;
  if (r > 1)
    return `The post-fit width is ${formatFixed(r, 2)} times the width the data alone would give: correlations with other parameters widen it.`;
  return `The post-fit width is ${formatFixed(r, 2)} times the width the data alone would give, narrower than the information breakdown allows; look at the convergence report and the correlations.`;
}

/** The diagnosis as the report the glyphs draw (they were made for the result tables). */
function asReport(d: Diagnosis): NuisanceReport {
  return {
    name: d.parameter.name,
    group: d.parameter.group,
    fixed: false,
    pull: d.pull,
    constraint: d.constraint,
    overConstrained: d.overConstrained,
    normalisedPull: null,
    quickImpact: d.quickImpact,
    postfitImpact: d.postfitImpact,
    prefitImpact: d.prefitImpact,
    rank: d.rank,
  };
}

/** One part of the panel: an id the summary can point at, and a brief ring when it does. */
function Section({ evidence, title, lit, children, className = '', actions }: { evidence?: Evidence; title: ReactNode; lit: boolean; children: ReactNode; className?: string; actions?: ReactNode }) {
  return (
    <section
      id={evidence ? evidenceId(evidence) : undefined}
      tabIndex={evidence ? -1 : undefined}
      aria-label={typeof title === 'string' ? title : undefined}
      className={`scroll-mt-28 rounded-lg border bg-paper-raised transition-shadow duration-300 ${lit ? 'border-amber shadow-[0_0_0_3px_var(--color-amber-soft)]' : 'border-rule'} ${className}`}
      data-lit={lit || undefined}
    >
      <div className="flex items-center justify-between gap-2 border-b border-rule px-4 py-2">
        <h3 className="text-sm font-semibold text-ink">{title}</h3>
        {actions}
      </div>
      <div className="px-4 py-3">{children}</div>
    </section>
  );
}

/** Regions sorted by the information they carry, with the prior's share as its own row. */
function regionItems(d: Diagnosis): ShareItem[] {
  const total = d.information.total || 1;
  return [
    ...d.information.regions.map((r) => ({
      key: r.region,
      label: r.label,
      detail: r.role,
      share: r.share,
      title: `${r.label} (${r.region}): information ${formatFixed(r.information, 3)}, ${formatShare(r.share)} of the total`,
      tone: 'teal' as const,
    })),
    {
      key: '(prior)',
      label: 'The prior (θ = 0 ± 1)',
      share: d.information.constraint / total,
      title: `The constraint term contributes ${formatFixed(d.information.constraint, 3)} of ${formatFixed(total, 3)}`,
      tone: 'muted' as const,
    },
  ];
}

function topBins(d: Diagnosis): ShareItem[] {
  return d.information.regions
    .flatMap((r) => r.bins.map((b) => ({ r, b })))
    .sort((x, y) => y.b.share - x.b.share)
    .slice(0, BINS_LISTED)
    .filter(({ b }) => b.share > 0)
    .map(({ r, b }) => ({
      key: `${r.region}:${b.bin}`,
      label: `${r.label}, bin ${b.bin + 1}`,
      detail: `${formatEdge(b.low)}–${formatEdge(b.high)}`,
      share: b.share,
      title: `(∂ν/∂θ)²/ν = ${formatFixed(b.information, 4)}; expected ${formatFixed(b.expected, 1)} events; change at ±1: ${formatSigned(b.up, 2)} / ${formatSigned(b.down, 2)} events`,
      tone: 'amber' as const,
    }));
}

/** The region's post-fit distribution with the bins that carry the information washed in amber. */
function HighlightedRegion({ result, yields, model, region, parameter }: { result: FitResultHead; yields: FitPart<'yields'>; model?: Model; region: DiagnosisRegion; parameter: string }) {
  const list = yields.postfit ?? yields.prefit;
  const y = list.find((r) => r.region === region.region);
  const d = useMemo(() => (y ? fitRegionChart(result, y, yields.postfit ? 'postfit' : 'prefit', model) : null), [result, y, yields.postfit, model]);
  if (!y || !d) return null;
  const weights = y.total.values.map((_, i) => region.bins.find((b) => b.bin === i)?.share ?? 0);
  return (
    <figure className="flex flex-col gap-1">
      <figcaption className="text-sm font-semibold text-ink">
        {region.label}: where {parameter}’s information lies
      </figcaption>
      <StackedChart
        d={d}
        highlight={{
          weights,
          label: `bins carrying ${parameter}’s information (stronger = more)`,
          describe: (b) => `${formatShare(weights[b])} of ${parameter}’s information`,
        }}
      />
    </figure>
  );
}

export type DiagnosisPanelProps = {
  slug: string;
  diagnosis: Diagnosis;
  result: FitResultHead;
  /** the yields part, for the highlighted distributions; null while it loads */
  yields: FitPart<'yields'> | null;
  model?: Model;
  /**
   * The questions on this parameter's register entry, as the screen composes them (they belong to
   * another feature): `list` shows them; `raise`, given only to those who may raise one, draws the
   * form for a new question with a suggested title, and calls `close` when it is done with.
   */
  questions?: {
    list: ReactNode;
    raise?: (form: { entry: string; fit: { id: number; label: string }; defaultTitle: string; close: () => void }) => ReactNode;
  };
  /** whether the reader may run fits, and so the parameter's checks */
  mayRun?: boolean;
};

/**
 * Why one parameter came out of one fit as it did: its numbers on the prior band, where its
 * information comes from (regions, bins) next to what the data can resolve, its own likelihood
 * scan, its correlations, and a summary in words whose every sentence points at its evidence.
 */
export function DiagnosisPanel({ slug, diagnosis: d, result, yields, model, questions, mayRun = false }: DiagnosisPanelProps) {
  const [lit, setLit] = useState<Evidence | null>(null);
  const [raising, setRaising] = useState(false);
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  useEffect(() => () => void (timer.current && clearTimeout(timer.current)), []);

  const show = useCallback((e: Evidence) => {
    const el = document.getElementById(evidenceId(e));
    el?.scrollIntoView?.({ behavior: 'smooth', block: 'start' });
    el?.focus({ preventScroll: true });
    setLit(e);
    if (timer.current) clearTimeout(timer.current);
    timer.current = setTimeout(() => setLit(null), 2200);
  }, []);

  const name = d.parameter.name;
  const n = asReport(d);
  const threshold = d.threshold;
  const impactScale = Math.max(1e-9, ...[d.postfitImpact?.up, d.postfitImpact?.down, d.prefitImpact?.up, d.prefitImpact?.down].map((v) => Math.abs(v ?? 0)));
  const byInformation = [...d.information.regions].sort((a, b) => b.information - a.information);
  const shown = byInformation.filter((r) => r.information > 0).slice(0, REGIONS_SHOWN);
  const ratio = d.error !== null ? d.error / d.information.width : null;
  const fitLabel = fitName(d.fit);

  return (
    <article aria-label={`Diagnosis of ${name}`} className="flex flex-col gap-4">
      <header className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h2 className="flex flex-wrap items-baseline gap-2 text-lg font-semibold text-ink">
            {d.parameter.label && d.parameter.label !== name ? d.parameter.label : name}
            <span className="font-mono text-xs font-normal text-ink-muted">{name}</span>
          </h2>
          <p className="text-xs text-ink-muted">
            Group {groupName(d.parameter.group)}
            {d.parameter.entry && (
              <>
                {' · '}
                <Link to={`/a/${slug}/entries/${encodeURIComponent(d.parameter.entry.key)}`} className="text-teal-ink underline decoration-teal/40 underline-offset-2 hover:decoration-teal-ink">
                  register entry
                </Link>
                {d.parameter.entry.owner ? `, owned by ${d.parameter.entry.owner}` : ', no owner'}
              </>
            )}
            {' · '}
            {fitLabel}
          </p>
        </div>
        {questions?.raise && d.parameter.entry && (
          <Button variant="primary" size="sm" onClick={() => setRaising((r) => !r)} aria-expanded={raising}>
            Raise a question on {name}
          </Button>
        )}
      </header>

      {raising && questions?.raise && d.parameter.entry && (
        <section aria-label="Raise a question" className="rounded-lg border border-teal/40 bg-paper-raised px-4 py-3">
          {questions.raise({
            entry: d.parameter.entry.key,
            fit: { id: d.fit.id, label: fitLabel },
            defaultTitle: d.overConstrained ? `Why is ${name} constrained to ${formatFixed(d.constraint, 2)}?` : '',
            close: () => setRaising(false),
          })}
        </section>
      )}

      <div className="flex flex-col gap-1.5 rounded-md border border-rule bg-paper-sunk/50 px-3 py-2 text-xs text-ink-soft">
        <div className="flex flex-wrap items-center gap-2">
          <ConvergenceBadge status={result.status} />
          {d.warnings.length === 0 ? <span>The fit reports no convergence warnings.</span> : <span className="font-semibold text-amber-ink">{d.warnings.length} convergence warning{d.warnings.length === 1 ? '' : 's'} — read the numbers below with them:</span>}
        </div>
        {d.warnings.length > 0 && (
          <ul aria-label="Convergence warnings" className="list-disc pl-5 text-amber-ink">
            {d.warnings.map((w, i) => (
              <li key={i}>{w}</li>
            ))}
          </ul>
        )}
        <p>This diagnosis informs the collaboration’s own statistical review; it does not replace it.</p>
      </div>

      {(mayRun || (d.checks ?? []).length > 0) && (
        <Section title="Checks of this parameter" lit={false}>
          <DiagnosisChecks slug={slug} fitId={d.fit.id} parameter={name} checks={d.checks ?? []} mayRun={mayRun} />
        </Section>
      )}

      <div className="grid gap-4 xl:grid-cols-2">
        <Section title="In plain words" lit={false}>
          {d.summary.length === 0 ? (
            <p className="text-sm text-ink-muted">No summary for this parameter.</p>
          ) : (
            <ul aria-label="Summary" className="flex flex-col gap-2 text-sm">
              {d.summary.map((c, i) => (
                <li key={i} className="flex items-start gap-2">
                  <span aria-hidden className="mt-2 size-1.5 shrink-0 rounded-full bg-teal" />
                  <span>
                    {c.text}{' '}
                    <a
                      href={`#${evidenceId(c.evidence)}`}
                      onClick={(e) => {
                        e.preventDefault();
                        show(c.evidence);
                      }}
                      className="ml-0.5 rounded px-1 text-xs font-semibold whitespace-nowrap text-teal-ink underline-offset-2 hover:bg-teal-soft hover:underline"
                      aria-label={`See the evidence: ${EVIDENCE_NAMES[c.evidence]}`}
                    >
                      see ↓
                    </a>
                  </span>
                </li>
              ))}
            </ul>
          )}
        </Section>

        <Section evidence="pull" title="Pull, constraint and impact" lit={lit === 'pull'}>
          <dl className="grid grid-cols-[auto_1fr] items-center gap-x-4 gap-y-1.5 text-sm">
            <DefinitionRow label="Pull" title="(θ̂ − 0)/1: the shift of the best fit in units of the prior width">
              <span className="flex items-center gap-2">
                {formatSigned(d.pull, 3)} <PullMeter n={n} />
                {isStronglyPulled(n) && <Badge tone="plum">strongly pulled</Badge>}
              </span>
            </DefinitionRow>
            <DefinitionRow label="Constraint" title="σ̂/1: post-fit width over the prior width">
              <span className="flex items-center gap-2">
                {formatFixed(d.constraint, 3)} <ConstraintMeter n={n} threshold={threshold} />
                {d.overConstrained && <Badge tone="amber" title={`Post-fit width below ${threshold} of the prior`}>over-constrained (below {threshold})</Badge>}
              </span>
            </DefinitionRow>
            <DefinitionRow label="Post-fit impact" title="Δμ with θ fixed at θ̂ + σ̂ / θ̂ − σ̂, all else refitted, in units of μ">
              {d.postfitImpact ? (
                <span className="flex items-center gap-2">
                  <span className="tabular-nums" title="θ raised / θ lowered">
                    {formatSigned(d.postfitImpact.up, 4)} / {formatSigned(d.postfitImpact.down, 4)}
                  </span>
                  <ImpactRange up={d.postfitImpact.up} down={d.postfitImpact.down} preUp={d.prefitImpact?.up ?? null} preDown={d.prefitImpact?.down ?? null} scale={impactScale} width={144} />
                </span>
              ) : (
                <span className="text-ink-muted">not computed (run the fit with full impacts)</span>
              )}
            </DefinitionRow>
            <DefinitionRow label="Pre-fit impact" title="Δμ with θ fixed at θ̂ ± 1, all else refitted, in units of μ">
              {d.prefitImpact ? `${formatSigned(d.prefitImpact.up, 4)} / ${formatSigned(d.prefitImpact.down, 4)}` : '–'}
            </DefinitionRow>
            <DefinitionRow label="Quick impact" title="ρ(μ, θ)·σ_μ from the covariance, in units of μ (no refit)">
              {formatSigned(d.quickImpact, 4)}
            </DefinitionRow>
            <DefinitionRow label="Rank" title="Order by the post-fit impact max(|Δμ+|, |Δμ−|), 1 = largest">
              {d.rank ?? '–'}
            </DefinitionRow>
          </dl>
          <p className="mt-2 text-xs text-ink-muted">
            Meters: |pull| up to 3 prior widths, marked at 1; the constraint up to 1.2, marked at the {threshold} threshold and at the prior width 1. The impact’s bar covers Δμ as θ moves from θ̂ − σ̂
            (ring) to θ̂ + σ̂ (dot); the ticks are the pre-fit θ̂ ± 1.
          </p>
        </Section>

        <Section evidence="width" title="Width: the data alone against the fit" lit={lit === 'width'}>
          <dl className="grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm">
            <DefinitionRow label="With no correlations" title="1/√(total information): the width the data and the prior alone would leave">
              <strong>{formatFixed(d.information.width, 3)}</strong> of the prior width
            </DefinitionRow>
            <DefinitionRow label="Post-fit σ̂" title="√V_θθ from the fit, in units of the prior width">
              <strong>{formatFixed(d.error, 3)}</strong> of the prior width
            </DefinitionRow>
            <DefinitionRow label="Ratio σ̂ / width" title="Near 1: the data alone explain the constraint; clearly above 1: correlations widen it">
              {formatFixed(ratio, 2)}
            </DefinitionRow>
            <DefinitionRow label="Total information" title="Σ over bins of (∂ν/∂θ)²/ν, plus 1 from the prior">
              {formatFixed(d.information.total, 3)}
            </DefinitionRow>
          </dl>
          <p className="mt-2 text-sm text-ink-soft">{widthWords(d.error, d.information.width)}</p>
        </Section>

        <Section evidence="correlations" title="Strongest correlations in this fit" lit={lit === 'correlations'}>
          {d.correlations.length === 0 ? (
            <p className="text-sm text-ink-muted">No correlations recorded for this parameter.</p>
          ) : (
            <ol aria-label={`Strongest correlations of ${name}`} className="flex flex-col gap-1 text-sm">
              {d.correlations.map((c) => (
                <li key={c.name} className="flex items-center justify-between gap-3" title={`Post-fit correlation coefficient ρ(${name}, ${c.name})`}>
                  <Link to={diagnosisPath(slug, d.fit.id, c.name)} className="min-w-0 truncate text-teal-ink hover:underline">
                    <span className="font-mono text-xs">{c.name}</span>
                    {c.label && c.label !== c.name && <span className="ml-1.5 text-xs text-ink-muted">{c.label}</span>}
                  </Link>
                  <span className="inline-flex items-center gap-1.5 tabular-nums">
                    <span aria-hidden className="inline-block size-3 rounded-sm border" style={{ background: correlationColour(c.rho), borderColor: theme.rule }} />
                    ρ = {formatSigned(c.rho, 2)}
                  </span>
                </li>
              ))}
            </ol>
          )}
        </Section>
      </div>

      <Section evidence="regions" title="Where the information comes from: regions" lit={lit === 'regions'}>
        <ShareBars label={`Share of ${name}'s information by region`} items={regionItems(d)} />
        {shown.length > 0 && (
          <div className="mt-3 grid gap-4 xl:grid-cols-2">
            {yields ? (
              shown.map((r) => <HighlightedRegion key={r.region} result={result} yields={yields} model={model} region={r} parameter={name} />)
            ) : (
              <p className="text-sm text-ink-muted">Loading the distributions…</p>
            )}
          </div>
        )}
      </Section>

      <Section evidence="bins" title="Which bins, and their variation against the data’s precision" lit={lit === 'bins'}>
        <div className="flex flex-col gap-4">
          <div>
            <h4 className="mb-1 text-xs font-semibold text-ink-soft">Bins carrying the most information</h4>
            <ShareBars label={`Share of ${name}'s information by bin`} items={topBins(d)} />
          </div>
          <p className="text-sm text-ink-soft">
            Per bin, the change of the expected count with {name} at +1 and at −1, in events, against the data’s statistical precision √ν̂. Where the change is
            many times the precision in a bin with many events, those data alone pin the parameter down.
          </p>
          {shown.map((r) => (
            <div key={r.region} className="grid gap-3 2xl:grid-cols-[minmax(0,40rem)_1fr]">
              <VariationChart region={r} parameter={name} />
              <VariationTable region={r} />
            </div>
          ))}
        </div>
      </Section>

      <Section evidence="scan" title="Profile likelihood scan" lit={lit === 'scan'}>
        <ScanChart scan={d.scan} parameterLabel={`θ (${name})`} />
        <p className="mt-1 text-sm text-ink-soft">
          {d.scan.failure ? (
            d.scan.failure
          ) : (
            <>
              q = 1 crosses at θ = <strong className="tabular-nums">{formatFixed(d.scan.crossings68.low, 3)}</strong> and{' '}
              <strong className="tabular-nums">{formatFixed(d.scan.crossings68.high, 3)}</strong>
              {d.scan.crossings68.low !== null && d.scan.crossings68.high !== null && (
                <> (half-width {formatFixed((d.scan.crossings68.high - d.scan.crossings68.low) / 2, 3)}, against σ̂ = {formatFixed(d.error, 3)} from the covariance)</>
              )}
              . Every other parameter is refitted at each point.
            </>
          )}
        </p>
      </Section>

      {d.parameter.entry && questions && (
        <Section title="Questions on this parameter" lit={false}>
          {questions.list}
        </Section>
      )}
    </article>
  );
}

const EVIDENCE_NAMES: Record<Evidence, string> = {
  pull: 'pull, constraint and impact',
  width: 'the width with no correlations against σ̂',
  bins: 'the bins and their variations',
  regions: 'the regions’ shares',
  scan: 'the likelihood scan',
  correlations: 'the strongest correlations',
};
