import type { FitResultHead } from '@shared/schemas/fits';
import { ContourChart } from '../../../components/charts/contour-chart';
import { ScanChart } from '../../../components/charts/scan-chart';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { correlationColour } from '../../../lib/palette';
import { decimalsFor, formatFixed, formatSigned } from '../../../lib/stats-format';
import { poiSymbol, type PoiReport } from '../poi';

type Interval = { low: number | null; high: number | null } | null | undefined;

/** An interval of absolute values in words: [low, high], with "bound" for an end past the parameter's range. */
export function intervalText(interval: Interval, decimals: number): string {
  if (!interval) return '–';
  const end = (v: number | null) => (v === null ? 'bound' : formatFixed(v, decimals));
  return `[${end(interval.low)}, ${end(interval.high)}]`;
}

const col = dataColumns<PoiReport>();

function intervalCell(p: PoiReport, which: 'interval68' | 'interval95') {
  if (p.fixed) return <span className="text-ink-muted">held</span>;
  const i = p[which];
  if (!i) return <span className="text-ink-muted">{which === 'interval95' && p[which] === undefined ? 'not computed' : '–'}</span>;
  const dec = decimalsFor(p.error);
  const offsets = i.low !== null && i.high !== null ? ` (${formatSigned(i.high - p.value, dec)} / ${formatSigned(i.low - p.value, dec)})` : '';
  return (
    <>
      {intervalText(i, dec)}
      <span className="text-2xs text-ink-muted">{offsets}</span>
    </>
  );
}

const columns = [
  col.accessor('name', {
    header: 'Parameter of interest',
    meta: { headerTitle: 'The signal strength, by its label and key (μ multiplies the signal templates no other parameter of interest takes)' },
    cell: (c) => {
      const p = c.row.original;
      return (
        <>
          {p.label} <span className="font-mono text-2xs text-ink-muted">{p.name}</span>
          {p.fixed && (
            <span className="ml-1.5 rounded border border-rule-strong px-1 text-2xs font-semibold text-ink-soft" title="Held at this value in this fit, not fitted: it has no σ and no interval">
              held
            </span>
          )}
        </>
      );
    },
  }),
  col.accessor('value', {
    header: 'Best fit',
    meta: { numeric: true, cellTitle: (p) => (p.fixed ? 'Held at this value, not fitted' : 'The value at the minimum of the NLL, every other parameter fitted with it (in multiples of its nominal signal)') },
    cell: (c) => formatFixed(c.getValue(), decimalsFor(c.row.original.error)),
  }),
  col.accessor('error', {
    header: 'σ',
    meta: { numeric: true, headerTitle: '√V from the covariance at the minimum: the symmetric error', cellTitle: '√V from the covariance at the minimum: the symmetric error' },
    cell: (c) => (c.row.original.fixed ? <span className="text-ink-muted">–</span> : formatFixed(c.getValue(), decimalsFor(c.getValue()))),
  }),
  col.display({
    id: 'interval68',
    header: '68 % interval',
    meta: {
      numeric: true,
      nowrap: true,
      headerTitle: 'Where the profile likelihood of this parameter alone crosses q = 1, the others refitted at each value (absolute values; offsets from the best fit beside)',
      cellTitle: 'Where q = 2ΔNLL = 1 on each side, every other parameter refitted; "bound" when the crossing lies past the parameter’s range',
    },
    cell: (c) => intervalCell(c.row.original, 'interval68'),
  }),
  col.display({
    id: 'interval95',
    header: '95 % interval',
    meta: {
      numeric: true,
      nowrap: true,
      headerTitle: 'Where the profile likelihood of this parameter alone crosses q = 3.84 (absolute values; offsets from the best fit beside)',
      cellTitle: 'Where q = 2ΔNLL = 3.84 on each side, every other parameter refitted; "bound" when the crossing lies past the parameter’s range',
    },
    cell: (c) => intervalCell(c.row.original, 'interval95'),
  }),
];

/** The correlation among the free parameters of interest: a small matrix, and each pair in words. */
function PoiCorrelation({ section }: { section: NonNullable<FitResultHead['poi']> }) {
  const { names, values } = section.correlation;
  const label = (n: string) => section.list.find((p) => p.name === n)?.label ?? n;
  if (names.length < 2) return <p className="text-sm text-ink-muted">Fewer than two of them were free in this fit: there is no correlation among them.</p>;
  const pairs = names.flatMap((a, i) => names.slice(i + 1).map((b, k) => ({ a, b, rho: values[i * names.length + i + 1 + k] })));
  return (
    <div className="flex flex-col gap-2">
      <table className="w-max border-collapse text-xs tabular-nums" aria-label="Correlation among the parameters of interest">
        <thead>
          <tr>
            <td />
            {names.map((n) => (
              <th key={n} scope="col" className="px-2 py-1 text-center font-mono font-medium text-ink-soft" title={label(n)}>
                {poiSymbol(n)}
              </th>
            ))}
          </tr>
        </thead>
        <tbody>
          {names.map((r, i) => (
            <tr key={r}>
              <th scope="row" className="px-2 py-1 text-right font-mono font-medium text-ink-soft" title={label(r)}>
                {poiSymbol(r)}
              </th>
              {names.map((c, j) => {
                const v = values[i * names.length + j];
                return (
                  <td
                    key={c}
                    className="h-8 w-16 border border-paper-raised text-center"
                    style={{ background: correlationColour(v), color: Math.abs(v) > 0.6 ? '#fff' : undefined }}
                    title={`ρ(${poiSymbol(r)}, ${poiSymbol(c)}) = ${formatFixed(v, 3)}: the post-fit correlation from the covariance`}
                  >
                    {formatFixed(v, 2)}
                  </td>
                );
              })}
            </tr>
          ))}
        </tbody>
      </table>
      <ul className="flex flex-col gap-0.5 text-sm text-ink-soft">
        {pairs.map(({ a, b, rho }) => (
          <li key={`${a}-${b}`}>
            <span className="font-mono">{poiSymbol(a)}</span> and <span className="font-mono">{poiSymbol(b)}</span>: ρ ={' '}
            <strong className="text-ink tabular-nums">{formatSigned(rho, 2)}</strong>.{' '}
            {Math.abs(rho) < 0.1
              ? 'The data measure them nearly independently.'
              : rho < 0
                ? 'A higher value of one goes with a lower value of the other: the data tell their sum better than each alone.'
                : 'A higher value of one goes with a higher value of the other: the data tell their difference better than each alone.'}
          </li>
        ))}
      </ul>
    </div>
  );
}

/**
 * What the fit measured for each signal strength, and how they move together: the table of best
 * fits, σ and intervals, the correlation among them, each one's likelihood scan, and the contour
 * of the pair the fit was asked for.
 */
export function PoiPanel({ result }: { result: FitResultHead }) {
  const section = result.poi;
  if (!section || section.list.length === 0) return null;
  const byName = new Map(section.list.map((p) => [p.name, p]));
  const scans = section.list.flatMap((p) => {
    const scan = p.name === 'mu' ? (p.scan ?? result.scan) : p.scan;
    return scan ? [{ p, scan }] : [];
  });
  const contour = result.contour;
  const showContour = !!contour && contour.parameters.every((n) => byName.has(n));
  const axis = (name: string) => ({ name, label: byName.get(name)?.label ?? name, symbol: poiSymbol(name) });
  return (
    <Panel title="Parameters of interest">
      <div className="flex flex-col gap-4">
        <p className="text-sm text-ink-soft">
          This model fits {section.list.length} signal strengths at once, each multiplying its own signal templates. Each row is one of them, with every other parameter fitted
          alongside; the intervals are from each one’s own profile likelihood.
        </p>
        <DataTable columns={columns} data={section.list} getRowId={(p) => p.name} rowHeader="name" label="Parameters of interest" frame="plain" frameClass="max-w-5xl" />
        <div className={`grid gap-x-6 gap-y-4 ${showContour ? 'xl:grid-cols-[minmax(0,46rem)_minmax(14rem,1fr)]' : ''}`}>
          {showContour && <ContourChart contour={contour} axes={[axis(contour.parameters[0]), axis(contour.parameters[1])]} />}
          <div className="flex flex-col gap-1">
            <h3 className="text-sm font-semibold text-ink">How they move together</h3>
            <PoiCorrelation section={section} />
          </div>
        </div>
        {scans.length > 0 && (
          <div className="grid gap-4 xl:grid-cols-2">
            {scans.map(({ p, scan }) => (
              <ScanChart key={p.name} scan={scan} parameterLabel={poiSymbol(p.name)} />
            ))}
          </div>
        )}
        {scans.length === 0 && <p className="text-xs text-ink-muted">No likelihood scans in this fit: run it with a scan to see each one’s q curve.</p>}
      </div>
    </Panel>
  );
}
