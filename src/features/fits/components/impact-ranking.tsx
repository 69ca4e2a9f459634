import { useMemo, useState } from 'react';
import { Link, useNavigate } from 'react-router';
import type { NuisanceReport } from '@shared/schemas/fit';
import type { FitResultHead } from '@shared/schemas/fits';
import { ConstraintMeter, ImpactRange, PullMeter } from '../../../components/charts/parameter-glyphs';
import { QuestionMarker, type QuestionMark } from '../../../components/status/question-marker';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { SelectField } from '../../../components/ui/field';
import { SegmentedField } from '../../../components/ui/segmented-field';
import { diagnosisPath, groupName, isStronglyPulled, STRONG_PULL } from '../../../lib/fits';
import { theme } from '../../../lib/palette';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import { CUT_LEVELS, cutByShare, impactMode, impactSize, labelsOf, rankByImpact, sharesOf, warningsNaming, type Cut, type CutLevel, type ImpactMode } from '../result-helpers';
import { impactsFor, poiSymbol, type PoiWords } from '../poi';
import { GroupFilter, groupsOf } from './group-filter';
import { ImpactFigure } from './impact-figure';

/** One ranked parameter as the view draws it. */
export type ImpactRow = NuisanceReport & {
  label: string;
  /** rank among every free parameter, 1 = largest post-fit impact */
  position: number;
  /** the ranking key, max(|Δμ⁺|, |Δμ⁻|) (or |quick impact|) */
  size: number | null;
  /** (|Δμ⁺| + |Δμ⁻|)/2 (or |quick impact|), in units of μ */
  symmetric: number | null;
  /** one side of the post-fit impact is missing */
  partial: boolean;
  /** symmetric² / σ_μ² */
  share: number | null;
  /** the running sum of the shares in rank order, this row included */
  cumulative: number | null;
  /** convergence warnings that name this parameter, and whether it sits at a bound */
  warnings: string[];
};

type Review = { marks?: Map<string, QuestionMark>; onRaise?: (name: string) => void };

export const pct = (v: number | null | undefined, digits = 1) => (v === null || v === undefined || !Number.isFinite(v) ? '–' : `${(v * 100).toFixed(digits)} %`);

const shareWords = (w: PoiWords) => ({
  postfit: `the symmetric post-fit impact s = (|${w.delta}⁺| + |${w.delta}⁻|)/2, where ${w.delta}± = ${w.hat}(θ held at θ̂ ± σ̂, the rest refitted) − ${w.hat}`,
  quick: `the quick impact s = |ρ(${w.sym}, θ)·${w.sigma}| (an estimate from the covariance, no refits), so the share is ρ(${w.sym}, θ)²`,
  none: '',
});

/** The impact's scale: the largest |Δμ| among the rows, post- and pre-fit. */
export function impactScale(rows: NuisanceReport[], mode: ImpactMode): number {
  let m = 0;
  for (const r of rows) {
    if (mode === 'postfit') for (const v of [r.postfitImpact?.up, r.postfitImpact?.down, r.prefitImpact?.up, r.prefitImpact?.down]) if (v != null) m = Math.max(m, Math.abs(v));
    if (mode === 'quick' && r.quickImpact !== null) m = Math.max(m, Math.abs(r.quickImpact));
  }
  return m || 1;
}

/** A small meter of the running share: the fill is the cumulative share of σ_μ², the mark the cut. */
function CumulativeMeter({ value, cutAt }: { value: number; cutAt: number | null }) {
  const W = 56;
  const H = 10;
  const x = (v: number) => 0.5 + Math.min(1, Math.max(0, v)) * (W - 1);
  return (
    <svg width={W} height={H} viewBox={`0 0 ${W} ${H}`} className="block shrink-0" aria-hidden>
      <rect x={0.5} y={2} width={W - 1} height={H - 4} fill={theme.paper} stroke={theme.rule} strokeWidth={0.8} rx={1.5} />
      <rect x={0.5} y={2} width={Math.max(0.8, x(value) - 0.5)} height={H - 4} fill={theme.ink} fillOpacity={0.55} rx={1.5} />
      {cutAt !== null && <line x1={x(cutAt)} x2={x(cutAt)} y1={0} y2={H} stroke={theme.teal} strokeWidth={1.4} />}
    </svg>
  );
}

const col = dataColumns<ImpactRow>();

/** Narrower padding than the shared look: this table is wide, and should fit beside the navigation. */
const TIGHT = 'px-2!';

function makeColumns(slug: string, fitId: number, mode: ImpactMode, scale: number, threshold: number, cutAt: number | null, review: Review, w: PoiWords) {
  const columns = columnsFor(slug, fitId, mode, scale, threshold, cutAt, review, w);
  for (const c of columns) c.meta = { ...c.meta, headerClass: `${c.meta?.headerClass ?? ''} ${TIGHT}` };
  return columns;
}

function columnsFor(slug: string, fitId: number, mode: ImpactMode, scale: number, threshold: number, cutAt: number | null, review: Review, w: PoiWords) {
  const shareDefinition = `Share of ${w.sigma}²: s²/${w.sigma}², with s ${shareWords(w)[mode]}. Shares overlap where parameters are correlated, so they need not add up to σ_syst².`;
  return col.columns([
    col.accessor('name', {
      header: 'Parameter',
      sortFn: 'alphanumeric',
      meta: { nowrap: true, headerTitle: 'The nuisance parameter, with its rank by impact (1 = largest); the name opens its diagnosis' },
      cell: (c) => {
        const r = c.row.original;
        const mark = review.marks?.get(r.name);
        return (
          <span className="flex items-center gap-2">
            <span className="w-5 shrink-0 text-right text-xs text-ink-muted tabular-nums" title={mode === 'none' ? 'Row number' : `Rank ${r.position} by ${mode === 'postfit' ? `post-fit impact max(|${w.delta}⁺|, |${w.delta}⁻|)` : `quick impact |ρ(${w.sym}, θ)·${w.sigma}|`}, 1 = largest`}>
              {r.position}
            </span>
            <span className="flex min-w-0 flex-col leading-tight">
              <span className="flex items-center gap-1.5">
                <Link
                  to={diagnosisPath(slug, fitId, r.name)}
                  onClick={(e) => e.stopPropagation()}
                  className="font-mono text-xs font-medium text-teal-ink hover:underline"
                  title={`Open the diagnosis of ${r.name}`}
                >
                  {r.name}
                </Link>
                {mark && <QuestionMarker state={mark.state} count={mark.count} />}
                {r.warnings.length > 0 && (
                  <span
                    role="img"
                    aria-label={`${r.warnings.length} convergence warning${r.warnings.length === 1 ? '' : 's'} on ${r.name}: ${r.warnings.join(' ')}`}
                    title={r.warnings.join('\n')}
                    className="inline-flex h-4 min-w-4 items-center justify-center rounded border border-amber/60 bg-amber-soft px-1 text-2xs leading-none font-bold text-amber-ink"
                  >
                    !
                  </span>
                )}
              </span>
              {r.label && r.label !== r.name && (
                <span className="max-w-[14rem] truncate text-2xs text-ink-muted" title={r.label}>
                  {r.label}
                </span>
              )}
            </span>
          </span>
        );
      },
    }),
    col.accessor((r) => groupName(r.group), { id: 'group', header: 'Group', sortFn: 'text', meta: { cellClass: 'text-xs whitespace-normal! min-w-[6rem] max-w-[8rem]' } }),
    ...(mode === 'none'
      ? []
      : [
          col.accessor((r) => r.size ?? undefined, {
            id: 'range',
            header: () => (
              <span className="flex flex-col leading-tight">
                <span>{mode === 'postfit' ? `${w.delta} as θ moves by ±σ̂` : `${w.delta}, quick estimate`}</span>
                <span className="flex w-[152px] justify-between text-2xs font-normal text-ink-muted tabular-nums" aria-hidden>
                  <span>−{formatFixed(scale, 3)}</span>
                  <span>0</span>
                  <span>+{formatFixed(scale, 3)}</span>
                </span>
              </span>
            ),
            sortFn: 'basic',
            sortUndefined: 'last',
            meta: {
              headerTitle:
                mode === 'postfit'
                  ? `The range of ${w.hat} − ${w.hat}₀ as θ is held from θ̂ − σ̂ (ring) to θ̂ + σ̂ (filled dot), the rest refitted; ticks: the same with θ̂ ± 1 (pre-fit). Sorts by max(|${w.delta}⁺|, |${w.delta}⁻|), the rank.`
                  : `The estimate ρ(${w.sym}, θ)·${w.sigma} from the covariance, no refits. Sorts by its size, the rank.`,
            },
            cell: (c) => {
              const r = c.row.original;
              return mode === 'postfit' ? (
                <ImpactRange up={r.postfitImpact?.up ?? null} down={r.postfitImpact?.down ?? null} preUp={r.prefitImpact?.up ?? null} preDown={r.prefitImpact?.down ?? null} scale={scale} width={152} symbol={w.sym} />
              ) : (
                <ImpactRange up={r.quickImpact} down={r.quickImpact === null ? null : -r.quickImpact} scale={scale} width={152} estimated symbol={w.sym} />
              );
            },
          }),
          col.accessor((r) => r.symmetric ?? undefined, {
            id: 'symmetric',
            header: 'Impact ±s',
            sortFn: 'basic',
            sortUndefined: 'last',
            meta: {
              numeric: true,
              nowrap: true,
              headerTitle: mode === 'postfit' ? `The symmetric impact s = (|${w.delta}⁺| + |${w.delta}⁻|)/2 of the post-fit refits, in units of ${w.sym}` : `The quick impact |ρ(${w.sym}, θ)·${w.sigma}|, in units of ${w.sym}`,
              cellTitle: (r) =>
                r.partial ? 'Only one side of the post-fit impact exists (the other refit gave none): s is that side' : mode === 'postfit' ? `s = (|${w.delta}⁺| + |${w.delta}⁻|)/2, in units of ${w.sym}` : `|ρ(${w.sym}, θ)·${w.sigma}|, in units of ${w.sym}`,
            },
            cell: (c) => (
              <span className="text-xs">
                {c.row.original.symmetric === null ? '–' : `±${formatFixed(c.row.original.symmetric, 4)}`}
                {c.row.original.partial && <span className="text-amber-ink">*</span>}
              </span>
            ),
          }),
          col.accessor((r) => r.share ?? undefined, {
            id: 'share',
            header: `Share of ${w.sigma}²`,
            sortFn: 'basic',
            sortUndefined: 'last',
            meta: { numeric: true, nowrap: true, headerTitle: shareDefinition, cellTitle: shareDefinition },
            cell: (c) => <span className="text-xs font-semibold">{pct(c.row.original.share)}</span>,
          }),
          col.accessor((r) => r.cumulative ?? undefined, {
            id: 'cumulative',
            header: 'Cumulative',
            sortFn: 'basic',
            sortUndefined: 'last',
            meta: {
              nowrap: true,
              headerTitle: `The shares of ${w.sigma}² of this parameter and of every one ranked above it in the list. Meter: 0 to 100 % of ${w.sigma}², the teal mark is the cut.`,
              cellTitle: (r) => `Parameters ranked 1 to ${r.position} in this list hold ${pct(r.cumulative)} of ${w.sigma}² together`,
            },
            cell: (c) =>
              c.row.original.cumulative === null ? (
                <span className="text-xs text-ink-muted">–</span>
              ) : (
                <span className="flex items-center justify-end gap-1.5">
                  <span className="w-12 text-right text-xs tabular-nums">{pct(c.row.original.cumulative)}</span>
                  <CumulativeMeter value={c.row.original.cumulative} cutAt={cutAt} />
                </span>
              ),
          }),
        ]),
    col.accessor('pull', {
      header: 'Pull',
      sortFn: (a, b) => Math.abs(a.original.pull) - Math.abs(b.original.pull),
      meta: { nowrap: true, headerTitle: `(θ̂ − 0)/1: how far the data moved θ, in prior widths; the meter shows |pull| up to 3 with a mark at ${STRONG_PULL}. Sorts by |pull|.` },
      cell: (c) => {
        const r = c.row.original;
        return (
          <span className="flex items-center gap-1.5">
            <span className={`w-11 text-right text-xs tabular-nums ${isStronglyPulled(r) ? 'font-semibold text-plum' : ''}`}>{formatSigned(r.pull, 2)}</span>
            <PullMeter n={r} />
          </span>
        );
      },
    }),
    col.accessor((r) => r.constraint ?? undefined, {
      id: 'constraint',
      header: 'Constraint',
      sortFn: 'basic',
      sortUndefined: 'last',
      meta: { nowrap: true, headerTitle: `σ̂/1: the post-fit width over the prior width; below ${threshold} is over-constrained` },
      cell: (c) => {
        const r = c.row.original;
        return (
          <span className="flex items-center gap-1.5">
            <span className={`w-9 text-right text-xs tabular-nums ${r.overConstrained ? 'font-semibold text-amber-ink' : ''}`}>{formatFixed(r.constraint, 2)}</span>
            <ConstraintMeter n={r} threshold={threshold} />
          </span>
        );
      },
    }),
    ...(review.onRaise
      ? [
          col.display({
            id: 'ask',
            header: 'Actions',
            enableSorting: false,
            meta: { srOnlyHeader: true },
            cell: (c) => (
              <button
                type="button"
                onClick={(e) => {
                  e.stopPropagation();
                  review.onRaise?.(c.row.original.name);
                }}
                className="rounded px-1.5 py-0.5 text-xs font-medium text-teal-ink hover:bg-teal-soft hover:underline"
                aria-label={`Raise a question on ${c.row.original.name}`}
                data-raise={c.row.original.name}
                title={`Raise a question on ${c.row.original.name}`}
              >
                Raise…
              </button>
            ),
          }),
        ]
      : []),
  ]);
}

/** The words under the cut: which of the kept parameters the data moved or constrained. */
function movedOrConstrained(rows: ImpactRow[], threshold: number) {
  const moved = rows.filter(isStronglyPulled);
  const narrowed = rows.filter((r) => r.overConstrained);
  const list = (rs: ImpactRow[], what: (r: ImpactRow) => string) =>
    rs.map((r, i) => (
      <span key={r.name}>
        {i > 0 && ', '}
        <span className="font-mono">{r.name}</span> ({what(r)})
      </span>
    ));
  if (!moved.length && !narrowed.length)
    return (
      <>
        The data moved none of them beyond {STRONG_PULL} prior width and constrained none below {threshold}.
      </>
    );
  return (
    <>
      {narrowed.length > 0 && (
        <span className="text-amber-ink">
          Constrained below {threshold}: {list(narrowed, (r) => `σ̂ ${formatFixed(r.constraint, 2)}`)}.{' '}
        </span>
      )}
      {moved.length > 0 && (
        <span className="text-plum">
          Moved beyond {STRONG_PULL} prior width: {list(moved, (r) => `pull ${formatSigned(r.pull, 2)}`)}.
        </span>
      )}
      {(!moved.length || !narrowed.length) && <> {!moved.length ? `None was moved beyond ${STRONG_PULL} prior width.` : `None was constrained below ${threshold}.`}</>}
    </>
  );
}

const levelWords = (level: CutLevel) => (level === 1 ? 'all' : `${Math.round(level * 100)} %`);

/** What the cut keeps, in one sentence. */
function CutSummary({ cut, listed, level, group, w }: { cut: Cut; listed: number; level: CutLevel; group: string | null; w: PoiWords }) {
  const whose = group === null ? 'the listed parameters' : `the parameters of ${group}`;
  if (cut.total <= 0) return <>{listed} parameter{listed === 1 ? '' : 's'} listed.</>;
  if (level === 1)
    return (
      <>
        All <strong>{listed}</strong> parameter{listed === 1 ? '' : 's'} listed: together <strong>{pct(cut.total)}</strong> of {w.sigma}².
      </>
    );
  return (
    <>
      <strong>
        {cut.kept} of {listed}
      </strong>{' '}
      parameters hold <strong>{pct(cut.keptShare)}</strong> of {w.sigma}²: {pct(cut.keptShare / cut.total, 0)} of the {pct(cut.total)} that {whose} hold together (the cut at {levelWords(level)} falls at {pct(cut.threshold)}).
    </>
  );
}

/**
 * The impact ranking, built to answer two questions: which few parameters make most of the
 * uncertainty on μ, and which of those did the data move or constrain. Rows are ranked by the
 * post-fit impact (likelihood.md §6) and cut where their running share of σ_μ² reaches a chosen
 * part of what the listed parameters hold together; each row has one signed range for its impact
 * with the pre-fit range as ticks, its share and the running share, and its pull and constraint
 * as numbers with a meter each. A click on a row opens its diagnosis.
 */
export function ImpactRanking({
  slug,
  fitId,
  fitLabel,
  result: full,
  poi = 'mu',
  onPoiChange,
  marks,
  onRaise,
}: {
  slug: string;
  fitId: number;
  fitLabel?: string;
  result: FitResultHead;
  /** the parameter of interest the impacts are on (its key; μ is "mu") */
  poi?: string;
  /** offered when the result has several parameters of interest */
  onPoiChange?: (poi: string) => void;
} & Review) {
  const navigate = useNavigate();
  const on = useMemo(() => impactsFor(full, poi), [full, poi]);
  const result = on.result;
  const w = on.words;
  const pois = full.poi?.list ?? [];
  const mode = impactMode(result);
  const threshold = result.options.overConstraintThreshold;
  const mu = result.summary?.mu;
  const sigmaMu = mu && !mu.fixed && mu.error !== null && mu.error > 0 ? mu.error : null;
  const [level, setLevel] = useState<CutLevel>(0.9);
  const [group, setGroup] = useState<string | null>(null);

  const ranked = useMemo(() => {
    const labels = labelsOf(result);
    const warnings = result.convergence.warnings;
    const atBound = new Set(result.convergence.parametersAtBound);
    return rankByImpact(
      result.nuisance.filter((n) => !n.fixed),
      mode,
    ).map((n, i) => ({
      ...n,
      label: labels.get(n.name) ?? '',
      position: i + 1,
      size: impactSize(n, mode),
      warnings: [...(atBound.has(n.name) && !warnings.some((w) => w.startsWith(`${n.name} is at a bound`)) ? [`${n.name} is at a bound of its range.`] : []), ...warningsNaming(warnings, n.name)],
    }));
  }, [result, mode]);

  const { rows, listed, cut } = useMemo(() => {
    const inGroup = group === null ? ranked : ranked.filter((r) => groupName(r.group) === group);
    const shares = sharesOf(inGroup, mode, sigmaMu);
    const all: ImpactRow[] = inGroup.map((r, i) => ({ ...r, ...shares[i] }));
    const c = cutByShare(shares, mode === 'none' || sigmaMu === null ? 1 : level);
    return { rows: all.slice(0, c.kept), listed: all, cut: c };
  }, [ranked, group, mode, sigmaMu, level]);

  const scale = useMemo(() => impactScale(ranked, mode), [ranked, mode]);
  const cutAt = mode !== 'none' && sigmaMu !== null && level < 1 ? cut.threshold : null;
  const columns = useMemo(() => makeColumns(slug, fitId, mode, scale, threshold, cutAt, { marks, onRaise }, w), [slug, fitId, mode, scale, threshold, cutAt, marks, onRaise, w]);
  const held = result.nuisance.filter((n) => n.fixed);
  const below = listed.slice(cut.kept);
  const belowShare = below.reduce((s, r) => s + (r.share ?? 0), 0);
  const withShares = mode !== 'none' && sigmaMu !== null;
  const statShare = sigmaMu !== null && mu?.stat != null ? (mu.stat * mu.stat) / (sigmaMu * sigmaMu) : null;

  return (
    <div className="flex flex-col gap-3">
      {pois.length > 1 && onPoiChange && (
        <div className="flex flex-wrap items-end gap-x-4 gap-y-1">
          <SelectField label="Impacts on" value={on.poi} onChange={(e) => onPoiChange(e.target.value)} className="w-full max-w-sm">
            {pois.map((p) => (
              <option key={p.name} value={p.name}>
                {p.label} ({poiSymbol(p.name)})
              </option>
            ))}
          </SelectField>
          <p className="pb-1.5 text-xs text-ink-muted">
            {on.poi === 'mu'
              ? `Each parameter of interest has its own ranking: the same refits, read for ${pois.length > 2 ? 'each one' : 'the other one'} instead of μ.`
              : `${w.hat} = ${formatFixed(on.result.summary?.mu.value, 3)}: every Δ below is the change in ${w.sym}, and the shares are of ${w.sigma}². The grouped impacts and the statistical part are μ’s alone, and so is the impact in the diagnosis a name opens.`}
          </p>
        </div>
      )}
      {mode === 'quick' && (
        <p role="note" className="rounded-md border border-amber/40 bg-amber-soft/60 px-3 py-2 text-sm text-amber-ink">
          <strong>Quick impacts:</strong> this fit ran no refits. The ranking, the ranges and the shares use the estimate ρ({w.sym}, θ)·{w.sigma} from the covariance, so each share is
          ρ({w.sym}, θ)²; there is no pre-fit range. Run the fit with full impacts for the real {w.delta}.
        </p>
      )}
      {mode === 'none' && <p className="text-sm text-ink-muted">This fit was run without impacts: the table lists pulls and constraints only, by name.</p>}
      {mode !== 'none' && sigmaMu === null && <p className="text-sm text-ink-muted">{w.sym} has no uncertainty in this fit (it was held), so no share of {w.sigma}² can be given; the parameters are ranked by their impact alone.</p>}

      {withShares && (
        <p className="text-sm text-ink-soft">
          <span title={`${w.sigma} = √${w.variance}, in units of ${w.sym}`}>
            {w.sigma} = <strong className="tabular-nums">±{formatFixed(sigmaMu, 4)}</strong>
          </span>
          {statShare !== null && (
            <>
              {' · '}
              <span title={`σ_stat²/${w.sigma}²: every θ and γ held, ${w.sym} and the normalisations free`}>
                the data’s statistics alone: <strong className="tabular-nums">{pct(statShare)}</strong> of {w.sigma}²
              </span>
            </>
          )}
          {' · '}
          <span title={`Σ s²/${w.sigma}² over the free nuisance parameters; correlated parameters overlap, so this need not equal σ_syst²/${w.sigma}²`}>
            the {ranked.length} free nuisance parameters: <strong className="tabular-nums">{pct(sharesOf(ranked, mode, sigmaMu).reduce((s, r) => s + (r.share ?? 0), 0))}</strong> of {w.sigma}² by their
            shares
          </span>
        </p>
      )}

      <div className="flex flex-wrap items-end gap-x-5 gap-y-3">
        {withShares && (
          <SegmentedField<CutLevel>
            legend="Keep the leading parameters up to this part of what they hold together"
            value={level}
            onChange={setLevel}
            options={CUT_LEVELS.map((l) => ({ value: l, label: l === 1 ? 'all' : `${Math.round(l * 100)} %`, title: l === 1 ? 'Every parameter' : `The leading parameters whose shares reach ${Math.round(l * 100)} % of the listed parameters' total` }))}
          />
        )}
        <GroupFilter groups={groupsOf(ranked)} value={group} onChange={setGroup} />
      </div>

      <div role="status" aria-label="What the cut keeps" className="flex flex-col gap-0.5 text-sm">
        <p>{withShares ? <CutSummary cut={cut} listed={listed.length} level={level} group={group} w={w} /> : <>{listed.length} free nuisance parameters listed.</>}</p>
        {rows.length > 0 && <p className="text-ink-soft">{movedOrConstrained(rows, threshold)}</p>}
      </div>

      <DataTable
        columns={columns}
        data={rows}
        sortable
        stickyFirstColumn
        rowHeader="name"
        getRowId={(r) => r.name}
        label="Impact ranking"
        cellClass="px-2! py-1 align-middle! whitespace-nowrap"
        onRowClick={(r) => navigate(diagnosisPath(slug, fitId, r.name))}
        empty="No nuisance parameter in this group."
      />

      <div className="flex flex-wrap items-center gap-x-3 gap-y-1 text-xs text-ink-muted">
        {below.length > 0 && (
          <span>
            Below the cut: {below.length} parameter{below.length === 1 ? '' : 's'}
            {belowShare > 0 ? `, together ${pct(belowShare)} of ${w.sigma}²` : ''}.{' '}
            <button type="button" onClick={() => setLevel(1)} className="rounded px-1 font-medium text-teal-ink hover:bg-teal-soft hover:underline">
              Show all {listed.length}
            </button>
          </span>
        )}
        {held.length > 0 && (
          <span title={held.map((n) => n.name).join(', ')}>
            {held.length} held at {held.length === 1 ? 'its' : 'their'} start value, not ranked.
          </span>
        )}
        <span>A click on a row opens the parameter’s diagnosis.{marks && marks.size > 0 && ' A “?” marks a parameter with a question not yet resolved; a “!” a convergence warning.'}</span>
      </div>

      {mode !== 'none' && (
        <details className="rounded-lg border border-rule bg-paper-raised px-4 py-2 text-xs text-ink-soft">
          <summary className="cursor-pointer text-sm font-semibold text-ink">How to read the ranking</summary>
          <ul className="mt-1.5 flex list-disc flex-col gap-1 pl-4">
            {mode === 'postfit' ? (
              <li>
                <strong>{w.delta} as θ moves by ±σ̂</strong>: the bar covers what {w.hat} does while θ is held between θ̂ − σ̂ (ring) and θ̂ + σ̂ (filled dot), everything else refitted. The two upright
                ticks are the same with θ̂ ± 1, the pre-fit range: ticks well outside the bar mean the data narrowed what this parameter can do to {w.sym}. Common scale ±{formatFixed(scale, 3)} in {w.sym}.
              </li>
            ) : (
              <li>
                <strong>{w.delta}, quick estimate</strong>: the hollow bar runs from −|ρ{w.sigma}| to +|ρ{w.sigma}|, the filled dot where θ raised lands. Common scale ±{formatFixed(scale, 3)} in {w.sym}.
              </li>
            )}
            {sigmaMu !== null && (
              <li>
                <strong>Share of {w.sigma}²</strong>: s²/{w.sigma}², with s {shareWords(w)[mode]}. <strong>Cumulative</strong>: the shares from rank 1 down to the row. The cut keeps the leading rows until
                their running share reaches the chosen part of what the listed parameters hold together; {w.sigma}² also holds the data’s statistics, and correlated parameters overlap.
              </li>
            )}
            <li>
              <strong>Pull</strong> (θ̂ − 0)/1 with a meter of |pull| up to 3 (mark at {STRONG_PULL}); <strong>constraint</strong> σ̂/1 with a meter up to 1.2 (marks at the {threshold} threshold and
              at 1). Plum: moved beyond {STRONG_PULL}; amber: constrained below {threshold}.
            </li>
          </ul>
        </details>
      )}

      {mode !== 'none' && rows.length > 0 && (
        <Panel>
          <ImpactFigure
            title={`Impact ranking${on.poi === 'mu' ? '' : ` on ${on.label} (${w.sym})`}${fitLabel ? `, ${fitLabel}` : ''}`}
            rows={rows}
            mode={mode}
            scale={scale}
            sigmaMu={sigmaMu}
            cut={cut}
            level={level}
            listed={listed.length}
            below={below.length}
            belowShare={belowShare}
            threshold={threshold}
            words={w}
          />
        </Panel>
      )}
    </div>
  );
}
