import { useEffect, useMemo, useRef, useState, type KeyboardEvent, type MouseEvent } from 'react';
import { Link } from 'react-router';
import type { FitResultHead } from '@shared/schemas/fits';
import { ExportButtons } from '../../../components/charts/export-buttons';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { Panel } from '../../../components/ui/page';
import { canvasToPng, chartFileName, downloadBlob, withLabelBand } from '../../../lib/chart-export';
import { correlationColour, theme } from '../../../lib/palette';
import { formatSigned } from '../../../lib/stats-format';
import { correlationSvg, drawCorrelation, layoutMatrix } from '../correlation-draw';
import { keepCorrelated, orderByClustering, orderByGroup, rho, strongestPairs, type CorrelationMatrix } from '../correlation-order';
import { groupName } from '../../../lib/fits';
import { labelsOf } from '../result-helpers';
import { groupsOf } from './group-filter';
import { PlotLabel, plotLabelText, usePlotLabels } from '../../../components/charts/plot-label';

type Ordering = 'group' | 'cluster';
type Cell = { r: number; c: number };

const POI_GROUP = 'signal strength';
const NORM_GROUP = 'normalisations';

/** The group a row of the matrix belongs to: μ and the normalisations first, then the systematics' groups. */
export function matrixGroups(result: FitResultHead): { groupOf: (name: string) => string; order: string[] } {
  const kinds = new Map(result.parameters.map((p) => [p.name, p.kind]));
  const groups = new Map(result.nuisance.map((n) => [n.name, groupName(n.group)]));
  const groupOf = (name: string) => (kinds.get(name) === 'poi' ? POI_GROUP : kinds.get(name) === 'normalisation' ? NORM_GROUP : (groups.get(name) ?? groupName(null)));
  return { groupOf, order: [POI_GROUP, NORM_GROUP, ...groupsOf(result.nuisance)] };
}

function ColourKey() {
  const stops = [-1, -0.5, 0, 0.5, 1];
  return (
    <div className="flex items-center gap-2 text-xs text-ink-soft" aria-label="Colour key: teal for ρ = −1, white for 0, plum for +1">
      <span>ρ = −1</span>
      <span
        aria-hidden
        className="inline-block h-3 w-40 rounded-sm border border-rule"
        style={{ background: `linear-gradient(to right, ${stops.map((s) => correlationColour(s)).join(', ')})` }}
      />
      <span>+1</span>
    </div>
  );
}

type NamedPair = { a: string; b: string; rho: number };

const pairColumn = dataColumns<NamedPair>();

function pairColumns(labels: Map<string, string>, linkTo?: (name: string) => string | null) {
  const name = (id: 'a' | 'b') =>
    pairColumn.accessor(id, {
      header: 'Parameter',
      meta: { cellClass: 'font-mono text-xs', cellTitle: (p) => labels.get(p[id]) },
      cell: (c) => {
        const to = linkTo?.(c.getValue());
        return to ? (
          <Link to={to} className="text-teal-ink hover:underline" title={`Open the diagnosis of ${c.getValue()}`}>
            {c.getValue()}
          </Link>
        ) : (
          c.getValue()
        );
      },
    });
  return [
    name('a'),
    name('b'),
    pairColumn.accessor('rho', {
      header: 'ρ',
      meta: { numeric: true, cellTitle: 'Post-fit correlation coefficient' },
      cell: (c) => (
        <span className="inline-flex items-center gap-1.5 tabular-nums">
          <span aria-hidden className="inline-block size-3 rounded-sm border" style={{ background: correlationColour(c.getValue()), borderColor: theme.rule }} />
          {formatSigned(c.getValue(), 3)}
        </span>
      ),
    }),
  ];
}

/** The strongest pairs among the parameters shown, each name a link to its diagnosis. */
function StrongestCorrelations({ pairs, labels, linkTo }: { pairs: NamedPair[]; labels: Map<string, string>; linkTo?: (name: string) => string | null }) {
  const columns = useMemo(() => pairColumns(labels, linkTo), [labels, linkTo]);
  return <DataTable columns={columns} data={pairs} getRowId={(p) => `${p.a}-${p.b}`} label="Strongest correlations" frame="plain" />;
}

/**
 * The post-fit correlation matrix on a canvas: hover or move with the arrow keys to read a cell,
 * order by group or by clustering, keep only parameters with some |ρ| above a threshold.
 */
export function CorrelationView({ result, correlation, linkTo }: { result: FitResultHead; correlation: CorrelationMatrix | null; linkTo?: (name: string) => string | null }) {
  const m = correlation;
  const [ordering, setOrdering] = useState<Ordering>('group');
  const [threshold, setThreshold] = useState(0);
  const [cell, setCell] = useState<Cell | null>(null);
  const [drawMs, setDrawMs] = useState<number | null>(null);
  const canvasRef = useRef<HTMLCanvasElement>(null);
  const plotLabels = usePlotLabels();
  const groups = useMemo(() => matrixGroups(result), [result]);
  const labels = useMemo(() => labelsOf(result), [result]);

  const fullOrder = useMemo(() => (m ? (ordering === 'group' ? orderByGroup(m, groups.groupOf, groups.order) : orderByClustering(m)) : []), [m, ordering, groups]);
  const shown = useMemo(() => (m ? keepCorrelated(m, fullOrder, threshold) : []), [m, fullOrder, threshold]);
  const layout = useMemo(() => {
    if (!m || ordering !== 'group') return layoutMatrix(shown);
    const boundaries = shown.map((_, r) => r).filter((r) => r > 0 && groups.groupOf(m.names[shown[r]]) !== groups.groupOf(m.names[shown[r - 1]]));
    return layoutMatrix(shown, boundaries);
  }, [m, shown, ordering, groups]);
  const pairs = useMemo(() => (m ? strongestPairs(m, shown, 15) : []), [m, shown]);

  useEffect(() => {
    if (!m || !canvasRef.current) return;
    const dpr = Math.min(3, Math.max(1, window.devicePixelRatio || 1));
    setDrawMs(drawCorrelation(canvasRef.current, m, layout, dpr));
  }, [m, layout]);
  useEffect(() => setCell(null), [shown]);

  if (!m || m.names.length === 0) return <p className="text-sm text-ink-muted">This result has no correlation matrix.</p>;
  const n = shown.length;

  const cellAt = (e: MouseEvent<HTMLCanvasElement>): Cell | null => {
    const rect = e.currentTarget.getBoundingClientRect();
    const k = rect.width > 0 ? layout.width / rect.width : 1;
    const c = Math.floor(((e.clientX - rect.left) * k - layout.labelW - 1) / layout.cell);
    const r = Math.floor(((e.clientY - rect.top) * k - layout.labelH - 1) / layout.cell);
    return r >= 0 && c >= 0 && r < n && c < n ? { r, c } : null;
  };
  const onKey = (e: KeyboardEvent<HTMLCanvasElement>) => {
    const step: Record<string, [number, number]> = { ArrowUp: [-1, 0], ArrowDown: [1, 0], ArrowLeft: [0, -1], ArrowRight: [0, 1] };
    const d = step[e.key];
    if (!d || n === 0) return;
    e.preventDefault();
    setCell((cur) => {
      const base = cur ?? { r: 0, c: 0 };
      if (!cur) return base;
      return { r: Math.max(0, Math.min(n - 1, base.r + d[0])), c: Math.max(0, Math.min(n - 1, base.c + d[1])) };
    });
  };
  const describe = (x: Cell) => {
    const a = m.names[shown[x.r]];
    const b = m.names[shown[x.c]];
    const v = rho(m, shown[x.r], shown[x.c]);
    return { a, b, v, text: `${a} × ${b}: ρ = ${formatSigned(v, 3)}` };
  };
  const current = cell ? describe(cell) : null;
  const title = 'Post-fit correlation matrix';

  return (
    <div className="flex flex-col gap-4">
      <div className="flex flex-wrap items-end gap-4">
        <fieldset className="flex flex-col gap-1">
          <legend className="text-xs font-semibold text-ink-soft">Order</legend>
          <div className="flex gap-3 text-sm">
            {(['group', 'cluster'] as const).map((o) => (
              <label key={o} className="flex items-center gap-1.5">
                <input type="radio" name="corr-order" className="accent-teal" checked={ordering === o} onChange={() => setOrdering(o)} />
                {o === 'group' ? 'by group' : 'by clustering'}
              </label>
            ))}
          </div>
        </fieldset>
        <div className="flex flex-col gap-1">
          <label htmlFor="corr-threshold" className="text-xs font-semibold text-ink-soft">
            Only parameters with some |ρ| ≥ <span className="tabular-nums">{threshold.toFixed(2)}</span>
          </label>
          <input
            id="corr-threshold"
            type="range"
            min={0}
            max={0.95}
            step={0.05}
            value={threshold}
            onChange={(e) => setThreshold(Number(e.target.value))}
            className="w-56 accent-teal"
            aria-valuetext={`|ρ| at least ${threshold.toFixed(2)}`}
          />
        </div>
        <p className="pb-1 text-xs text-ink-muted" aria-live="polite">
          {n} of {m.names.length} parameters shown
          {drawMs !== null && <span title="Time to draw the matrix on the canvas in this browser"> · drawn in {drawMs.toFixed(1)} ms</span>}
        </p>
        <div className="ml-auto">
          <ColourKey />
        </div>
      </div>

      <Panel
        title={
          <span className="flex flex-wrap items-baseline gap-x-3">
            {title}
            <svg viewBox="0 0 320 16" className="h-4 w-80" aria-hidden>
              <PlotLabel x={0} y={12} />
            </svg>
          </span>
        }
        actions={
          <ExportButtons
            title={title}
            onPng={async () => {
              if (canvasRef.current) downloadBlob(await canvasToPng(withLabelBand(canvasRef.current, plotLabels ? plotLabelText(plotLabels) : '')), chartFileName(title, 'png'));
            }}
            onSvg={async () => downloadBlob(new Blob([correlationSvg(m, layout, plotLabels ? plotLabelText(plotLabels) : '')], { type: 'image/svg+xml' }), chartFileName(title, 'svg'))}
          />
        }
      >
        {n === 0 ? (
          <p className="text-sm text-ink-muted">No two parameters reach |ρ| ≥ {threshold.toFixed(2)}. Lower the threshold.</p>
        ) : (
          <div className="relative inline-block max-w-full">
            <canvas
              ref={canvasRef}
              tabIndex={0}
              role="img"
              aria-label={`${title} of ${n} parameters, ordered ${ordering === 'group' ? 'by group' : 'by clustering'}. Hover, or focus and use the arrow keys, to read a cell.`}
              className="block h-auto max-w-full cursor-crosshair focus-visible:outline-2 focus-visible:outline-teal"
              style={{ width: layout.width, aspectRatio: `${layout.width} / ${layout.height}` }}
              onMouseMove={(e) => setCell(cellAt(e))}
              onMouseLeave={() => setCell(null)}
              onFocus={() => setCell((c) => c ?? { r: 0, c: 0 })}
              onKeyDown={onKey}
            />
            {cell && current && (
              <>
                <div
                  aria-hidden
                  className="pointer-events-none absolute border border-ink"
                  style={{
                    left: `${((layout.labelW + 1 + cell.c * layout.cell) / layout.width) * 100}%`,
                    top: `${((layout.labelH + 1 + cell.r * layout.cell) / layout.height) * 100}%`,
                    width: `${(layout.cell / layout.width) * 100}%`,
                    height: `${(layout.cell / layout.height) * 100}%`,
                    minWidth: 3,
                    minHeight: 3,
                  }}
                />
                <div
                  className="pointer-events-none absolute z-10 w-max max-w-72 rounded-md border border-rule-strong bg-paper-raised px-2.5 py-1.5 text-xs shadow-md"
                  style={{
                    left: `${Math.min(70, ((layout.labelW + (cell.c + 1) * layout.cell) / layout.width) * 100 + 1)}%`,
                    top: `${((layout.labelH + (cell.r + 1) * layout.cell) / layout.height) * 100 + 1}%`,
                  }}
                >
                  <p className="font-mono text-ink">{current.a}</p>
                  {labels.get(current.a) && labels.get(current.a) !== current.a && <p className="text-ink-muted">{labels.get(current.a)}</p>}
                  <p className="font-mono text-ink">× {current.b}</p>
                  {labels.get(current.b) && labels.get(current.b) !== current.b && <p className="text-ink-muted">{labels.get(current.b)}</p>}
                  <p className="mt-0.5 font-semibold tabular-nums" title="Post-fit correlation coefficient V_jk/(σ_j σ_k)">
                    ρ = {formatSigned(current.v, 3)}
                  </p>
                </div>
              </>
            )}
          </div>
        )}
        <p className="mt-2 text-xs text-ink-muted" aria-live="polite">
          {current ? current.text : layout.labelW === 0 ? 'Cells are too small for names here: hover over a cell to read it.' : 'Hover over a cell, or focus the matrix and use the arrow keys.'}
        </p>
      </Panel>

      <Panel title="Strongest correlations" className="max-w-3xl">
        {pairs.length === 0 ? (
          <p className="text-sm text-ink-muted">Fewer than two parameters shown.</p>
        ) : (
          <StrongestCorrelations pairs={pairs.map((p) => ({ a: m.names[p.a], b: m.names[p.b], rho: p.rho }))} labels={labels} linkTo={linkTo} />
        )}
      </Panel>
    </div>
  );
}
