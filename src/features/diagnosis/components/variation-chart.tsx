import { useRef } from 'react';
import { scaleBand, scaleLinear } from 'd3-scale';
import type { DiagnosisRegion } from '@shared/schemas/review';
import { LeftAxis } from '../../../components/charts/axes';
import { ExportButtons } from '../../../components/charts/export-buttons';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { formatEdge } from '../../../lib/format';
import { theme } from '../../../lib/palette';
import { formatFixed, formatSigned } from '../../../lib/stats-format';
import { formatShare } from './share-bars';
import { PlotLabel } from '../../../components/charts/plot-label';

const W = 560;
const H = 210;
const M = { left: 60, right: 12, top: 28, bottom: 30 };

/** How to say a ratio |variation| / √ν̂: above 1 the effect exceeds what the data can resolve in that bin. */
export function ratioWords(ratio: number): string {
  if (ratio >= 3) return 'far larger than the data’s precision';
  if (ratio >= 1) return 'larger than the data’s precision';
  if (ratio >= 0.3) return 'comparable to the data’s precision';
  return 'well within the data’s precision';
}

/**
 * One region's bins: the parameter's change of the expected count at θ = +1 (teal, left) and
 * θ = −1 (amber, right), in events, over the band ±√ν̂ of the data's statistical precision.
 */
export function VariationChart({ region, parameter }: { region: DiagnosisRegion; parameter: string }) {
  const ref = useRef<SVGSVGElement>(null);
  const bins = region.bins;
  const extent = Math.max(1e-9, ...bins.flatMap((b) => [Math.abs(b.up), Math.abs(b.down), b.precision])) * 1.1;
  const x = scaleBand<number>()
    .domain(bins.map((b) => b.bin))
    .range([M.left, W - M.right])
    .paddingInner(0.18)
    .paddingOuter(0.1);
  const y = scaleLinear().domain([-extent, extent]).range([H - M.bottom, M.top]).nice();
  const bw = x.bandwidth();
  const title = `${region.label}: ${parameter} at ±1 against the data’s precision`;
  const everyNth = Math.max(1, Math.ceil(bins.length / 16));
  return (
    <figure className="flex flex-col gap-1">
      <div className="flex items-center justify-between gap-2">
        <figcaption className="text-sm font-semibold text-ink">
          {region.label} <span className="font-mono text-2xs font-normal text-ink-muted">{region.region}</span>
        </figcaption>
        <ExportButtons title={title} svg={ref} />
      </div>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[40rem]"
        role="img"
        aria-label={`${title}: ${bins.length} bins; the largest ratio of the change to √(expected) is ${formatFixed(Math.max(0, ...bins.map((b) => b.ratio)), 1)}. The numbers are in the table.`}
      >
        <PlotLabel x={M.left} y={13} />
        <LeftAxis scale={y} x={M.left} title="change in events" />
        {bins.map((b) => {
          const x0 = x(b.bin) ?? 0;
          const half = bw / 2;
          return (
            <g key={b.bin}>
              <rect x={x0 - 1} y={y(b.precision)} width={bw + 2} height={Math.max(0.5, y(-b.precision) - y(b.precision))} fill={theme.inkMuted} fillOpacity={0.16} />
              <rect x={x0} y={Math.min(y(0), y(b.up))} width={half - 0.5} height={Math.max(0.8, Math.abs(y(b.up) - y(0)))} fill={theme.teal} />
              <rect x={x0 + half + 0.5} y={Math.min(y(0), y(b.down))} width={half - 0.5} height={Math.max(0.8, Math.abs(y(b.down) - y(0)))} fill={theme.amber} />
              {b.ratio >= 1 && (
                <text x={x0 + half} y={M.top + 2} dy="0.7em" textAnchor="middle" style={{ fontSize: 9, fill: theme.plum, fontWeight: 600 }}>
                  {b.ratio >= 10 ? Math.round(b.ratio) : b.ratio.toFixed(1)}×
                </text>
              )}
              {b.bin % everyNth === 0 && (
                <text x={x0 + half} y={H - M.bottom + 13} textAnchor="middle" style={{ fontSize: 9.5, fill: theme.inkMuted }}>
                  {b.bin + 1}
                </text>
              )}
              <rect x={x0 - 1} y={M.top} width={bw + 2} height={H - M.top - M.bottom} fill="transparent">
                <title>
                  {[
                    `Bin ${b.bin + 1}: ${formatEdge(b.low)}–${formatEdge(b.high)}`,
                    `θ = +1: ${formatSigned(b.up, 2)} events; θ = −1: ${formatSigned(b.down, 2)} events`,
                    `data precision √ν̂ = ±${formatFixed(b.precision, 2)} events (ν̂ = ${formatFixed(b.expected, 1)})`,
                    `|change| / precision = ${formatFixed(b.ratio, 2)}: ${ratioWords(b.ratio)}`,
                    `${formatShare(b.share)} of the parameter’s information`,
                  ].join('\n')}
                </title>
              </rect>
            </g>
          );
        })}
        <line x1={M.left} x2={W - M.right} y1={y(0)} y2={y(0)} stroke={theme.ink} strokeWidth={0.8} />
        <text x={W - M.right} y={H - 4} textAnchor="end" style={{ fontSize: 10.5, fill: theme.ink }}>
          bin
        </text>
      </svg>
      <ul className="flex flex-wrap gap-x-4 gap-y-1 text-xs text-ink-soft" aria-label={`Legend of ${region.label}`}>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block size-3 rounded-sm bg-teal" />θ raised to +1
        </li>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block size-3 rounded-sm bg-amber" />θ lowered to −1
        </li>
        <li className="flex items-center gap-1.5">
          <span aria-hidden className="inline-block h-3 w-4 rounded-sm" style={{ background: theme.inkMuted, opacity: 0.25 }} />
          data precision ±√ν̂
        </li>
        <li className="text-plum">n× over a bin: the change is n times the precision</li>
      </ul>
    </figure>
  );
}

type Bin = DiagnosisRegion['bins'][number];

const bin = dataColumns<Bin>();
const events = (header: string, headerTitle: string, value: (b: Bin) => number, format: (v: number) => string) =>
  bin.accessor(value, { id: header, header, meta: { numeric: true, headerTitle, cellTitle: 'events' }, cell: (c) => format(c.getValue()) });

const binColumns = [
  bin.accessor('bin', {
    header: 'Bin',
    meta: { nowrap: true },
    cell: (c) => (
      <>
        {c.getValue() + 1}{' '}
        <span className="text-2xs text-ink-muted">
          {formatEdge(c.row.original.low)}–{formatEdge(c.row.original.high)}
        </span>
      </>
    ),
  }),
  events('Expected', 'ν̂: the expected count at the best fit', (b) => b.expected, (v) => formatFixed(v, 1)),
  events('Precision ±', "√ν̂: the data's statistical precision in this bin", (b) => b.precision, (v) => formatFixed(v, 1)),
  events('θ = +1', 'Change of the expected count with θ = +1, all else at the best fit', (b) => b.up, (v) => formatSigned(v, 2)),
  events('θ = −1', 'Change of the expected count with θ = −1, all else at the best fit', (b) => b.down, (v) => formatSigned(v, 2)),
  bin.accessor('ratio', {
    header: 'Ratio',
    meta: { numeric: true, headerTitle: 'max(|up|, |down|) / √ν̂', cellTitle: (b) => ratioWords(b.ratio), cellClass: (b) => (b.ratio >= 1 ? 'font-semibold text-plum' : '') },
    cell: (c) => formatFixed(c.getValue(), 2),
  }),
  bin.accessor('share', { header: 'Information', meta: { numeric: true, headerTitle: "Share of the parameter's whole information" }, cell: (c) => formatShare(c.getValue()) }),
];

/** The same numbers per bin, as a table; a bin whose change exceeds the data's precision is marked. */
export function VariationTable({ region }: { region: DiagnosisRegion }) {
  return (
    <DataTable
      columns={binColumns}
      data={region.bins}
      getRowId={(b) => String(b.bin)}
      label={`Variations against the data's precision in ${region.label}`}
      frame="plain"
      rowTone={(b) => (b.ratio >= 1 ? 'marked' : undefined)}
    />
  );
}
