import type { ReactNode } from 'react';
import { TOY_LIMITS, type ToyQ0 } from '@shared/schemas/toys';
import { Badge } from '../../../components/ui/badge';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { formatCount, formatEdge } from '../../../lib/format';
import { zFromP } from '../../../lib/normal';
import { formatFixed, formatProbability, formatSigma } from '../../../lib/stats-format';
import { comparePValues, compareZeroFraction, FLAG_ERRORS, type PValueComparison } from '../toy-stats';
import { formatErrors } from './mean-sd';
import { ToyHistogramChart } from './toy-histogram-chart';

function Mark({ off, title }: { off: boolean; title: string }) {
  return off ? (
    <Badge tone="plum" title={title}>
      differs
    </Badge>
  ) : (
    <Badge tone="teal" title={title}>
      agrees
    </Badge>
  );
}

/** What the p-value comparison says, in one or two plain sentences. */
function Reading({ c, n }: { c: PValueComparison; n: number }) {
  let text: ReactNode;
  if (c.verdict === 'agree')
    text = (
      <>
        <strong>The toys bear out the asymptotic p-value</strong> here: they differ by {formatErrors(c.difference)}, within {FLAG_ERRORS} standard errors.
      </>
    );
  else if (c.verdict === 'disagree' && c.difference !== null)
    text = (
      <>
        <strong>The toys do not bear out the asymptotic p-value</strong>: they differ by {formatErrors(c.difference)}, more than {FLAG_ERRORS} standard errors. The asymptotic formula
        does not describe q0 for this model at this point; quote the toy p-value, or find out why before relying on the asymptotic one.
      </>
    );
  else if (c.verdict === 'disagree')
    text = (
      <>
        <strong>The toys do not bear out the asymptotic p-value</strong>: no toy reached the observed q0, so p is below {formatProbability(c.upperBound)} (95 % CL), yet the asymptotic
        formula gives {formatProbability(c.asymptotic)}.
      </>
    );
  else
    text = (
      <>
        <strong>These toys cannot test the asymptotic p-value</strong>: no toy of {formatCount(n)} reached the observed q0, so they say only that p is below{' '}
        {formatProbability(c.upperBound)} (95 % CL). About {formatCount(c.toysForTen ?? 0)} toys would put ten at or above it
        {c.toysForTen !== null && c.toysForTen > TOY_LIMITS.max ? `, more than one run may ask for (${formatCount(TOY_LIMITS.max)})` : ''}.
      </>
    );
  const tone = c.verdict === 'agree' ? 'border-teal/30 bg-teal-soft/50' : c.verdict === 'disagree' ? 'border-plum/30 bg-plum-soft/50' : 'border-amber/40 bg-amber-soft/50';
  return <p className={`rounded-md border px-3 py-2 text-sm text-ink ${tone}`}>{text}</p>;
}

/** One quantity of q0 in the toys and in the asymptotic formula, as the table's row. */
type Q0Row = {
  id: string;
  quantity: ReactNode;
  quantityTitle: string;
  toys: ReactNode;
  toysTitle: string;
  asymptotic: ReactNode;
  asymptoticTitle?: string;
  difference: ReactNode;
  /** Test ids of the toys and asymptotic cells. */
  ids?: { toys: string; asymptotic: string };
};

const q0Column = dataColumns<Q0Row>();
const q0Columns = [
  q0Column.display({ id: 'quantity', header: 'Quantity', meta: { cellTitle: (r) => r.quantityTitle }, cell: (c) => c.row.original.quantity }),
  q0Column.display({
    id: 'toys',
    header: 'Toys',
    meta: { numeric: true, nowrap: true, cellTitle: (r) => r.toysTitle, cellProps: (r) => (r.ids ? { 'data-testid': r.ids.toys } : {}) },
    cell: (c) => c.row.original.toys,
  }),
  q0Column.display({
    id: 'asymptotic',
    header: 'Asymptotic',
    meta: { numeric: true, cellTitle: (r) => r.asymptoticTitle, cellProps: (r) => (r.ids ? { 'data-testid': r.ids.asymptotic } : {}) },
    cell: (c) => c.row.original.asymptotic,
  }),
  q0Column.display({ id: 'difference', header: 'Toys − asymptotic', meta: { nowrap: true }, cell: (c) => c.row.original.difference }),
];

/** The fraction at q0 = 0, and with the fit's own q0 its p-value and Z, in the toys and in the asymptotic formula. */
function Q0Table({ q0, zero, p }: { q0: ToyQ0; zero: ReturnType<typeof compareZeroFraction>; p: PValueComparison | null }) {
  const dec = 3;
  const zeroCount = Math.round(q0.zeroFraction * q0.n);
  const background = q0.generatedMu === 0;
  const agreement = `More than ${FLAG_ERRORS} standard errors apart counts as a difference`;
  const rows: Q0Row[] = [
    {
      id: 'zero',
      quantity: 'Fraction at q0 = 0',
      quantityTitle: 'The share of toys whose μ̂ came out at or below 0, where q0 is 0',
      toys: (
        <>
          {formatFixed(q0.zeroFraction, dec)}
          {zero.error !== null && ` ± ${formatFixed(zero.error, dec)}`}
          <span className="block text-2xs text-ink-muted">
            {formatCount(zeroCount)} of {formatCount(q0.n)}
          </span>
        </>
      ),
      toysTitle: `${formatCount(zeroCount)} of ${formatCount(q0.n)} toys, ± the binomial standard error`,
      asymptotic: formatFixed(q0.expectedZeroFraction, dec),
      asymptoticTitle: `Φ(−μ′/σ_A) with μ′ = ${formatEdge(q0.generatedMu)} and σ_A = ${formatFixed(q0.sigmaMu, 4)}${background ? ': one half at μ′ = 0' : ''}`,
      difference: (
        <>
          <span className="mr-1.5 text-xs tabular-nums">{formatErrors(zero.difference)}</span>
          {zero.difference !== null && <Mark off={zero.off} title={agreement} />}
        </>
      ),
    },
    ...(p
      ? [
          {
            id: 'p',
            quantity: `p-value of q0,obs = ${formatFixed(q0.observed, 2)}`,
            quantityTitle: "P(q0 ≥ q0,obs): the share of toys at or above the fit's own q0",
            toys: (
              <>
                {p.count === 0 ? `< ${formatProbability(p.upperBound)}` : `${formatProbability(p.toy)} ± ${formatProbability(p.toyError)}`}
                <span className="block text-2xs text-ink-muted">
                  {formatCount(p.count)} of {formatCount(q0.n)} toys
                  {p.count === 0 ? ', 95 % CL' : ''}
                </span>
              </>
            ),
            toysTitle: 'Fraction of toys with q0 at or above the observed value, ± its binomial standard error',
            asymptotic: formatProbability(p.asymptotic),
            asymptoticTitle: background ? 'From ½δ(q0) + ½χ²₁: p = 1 − Φ(√q0,obs)' : 'From F(q0) = Φ(√q0 − μ′/σ_A), σ_A from the Asimov dataset at the generation point',
            difference: (
              <>
                <span className="mr-1.5 text-xs tabular-nums">{formatErrors(p.difference)}</span>
                {p.verdict !== 'untested' && <Mark off={p.verdict === 'disagree'} title={agreement} />}
                {p.verdict === 'untested' && (
                  <Badge tone="amber" title="No toy reached the observed q0">
                    untested
                  </Badge>
                )}
              </>
            ),
            ids: { toys: 'toy-p-value', asymptotic: 'asymptotic-p-value' },
          },
          {
            id: 'z',
            quantity: 'Z',
            quantityTitle: 'One-sided significance Z = Φ⁻¹(1 − p), in standard deviations',
            toys:
              p.toyZ === null ? (
                p.upperBound !== null ? `> ${formatSigma(zFromP(p.upperBound))}` : '–'
              ) : (
                <>
                  {formatSigma(p.toyZ)}
                  <span className="block text-2xs text-ink-muted">
                    {formatFixed(p.toyZRange[0], 2)} to {p.toyZRange[1] === null ? '∞' : formatFixed(p.toyZRange[1], 2)}
                  </span>
                </>
              ),
            toysTitle: 'Z of the toy p-value; in brackets, Z at p ± its standard error',
            asymptotic: formatSigma(p.asymptoticZ),
            difference: null,
            ids: { toys: 'toy-z', asymptotic: 'asymptotic-z' },
          },
        ]
      : []),
  ];
  return <DataTable columns={q0Columns} data={rows} getRowId={(r) => r.id} label="q0: toys against the asymptotic formula" rowHeader="quantity" frame="plain" />;
}

/**
 * q0 over the toys against its asymptotic distribution: the fraction at q0 = 0, the toy p-value
 * of the fit's own q0 beside the asymptotic one with both Z, and the histogram of q0 > 0 on a log
 * count scale. This is what tells a reviewer whether the fit's asymptotic significance holds.
 */
export function Q0ToyPanel({ q0 }: { q0: ToyQ0 | null }) {
  if (!q0)
    return (
      <Panel title="Discovery test statistic q0">
        <p className="text-sm text-ink-muted">No q0 for these toys: μ is held in the fit, or μ = 0 lies outside its range.</p>
      </Panel>
    );
  const zero = compareZeroFraction(q0);
  const p = comparePValues(q0);
  const zeroCount = Math.round(q0.zeroFraction * q0.n);
  const positive = q0.n - zeroCount;
  const background = q0.generatedMu === 0;
  return (
    <Panel title="Discovery test statistic q0">
      <div className="flex flex-col gap-3">
        {!background && (
          <p className="rounded-md border border-amber/40 bg-amber-soft/50 px-3 py-2 text-xs text-amber-ink">
            These toys were drawn at μ′ = {formatEdge(q0.generatedMu)}, not at μ = 0. The p-value below is P(q0 ≥ q0,obs | μ′ = {formatEdge(q0.generatedMu)}), not the discovery p-value;
            draw toys with μ held at 0 for that.
          </p>
        )}
        {p ? <Reading c={p} n={q0.n} /> : <p className="text-sm text-ink-muted">The fit has no q0 of its own, so there is no observed value to give a p-value for.</p>}
        <Q0Table q0={q0} zero={zero} p={p} />
        <ToyHistogramChart
          histogram={q0.histogram}
          title={`q0 of the ${formatCount(positive)} toys with q0 > 0`}
          description={
            background
              ? `The toys with q0 above 0, with what the asymptotic formula expects in each bin: ½χ²₁ over all ${formatCount(q0.n)} toys (the other half at q0 = 0). A heavier tail than the line means the asymptotic p-value is too small.`
              : `The toys with q0 above 0, with what the asymptotic formula expects in each bin for data drawn at μ′ = ${formatEdge(q0.generatedMu)}: F(q0) = Φ(√q0 − μ′/σ_A), with σ_A from the Asimov dataset at the generation point.`
          }
          xTitle="q0"
          valueName="q0"
          expectationLabel={background ? 'asymptotic ½χ²₁, per bin' : `asymptotic at μ′ = ${formatEdge(q0.generatedMu)}, per bin`}
          log
          marker={q0.observed !== null ? { value: q0.observed, label: `q0,obs = ${formatFixed(q0.observed, 2)}`, title: "The reference fit's own q0" } : null}
        />
      </div>
    </Panel>
  );
}
