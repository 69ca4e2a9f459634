import { useRef } from 'react';
import { scaleLinear } from 'd3-scale';
import type { FitResultHead } from '@shared/schemas/fits';
import { BottomAxis } from '../../../components/charts/axes';
import { ChartFigure } from '../../../components/charts/chart-figure';
import { Panel } from '../../../components/ui/page';
import { theme } from '../../../lib/palette';
import { formatFixed } from '../../../lib/stats-format';
import { PlotLabel } from '../../../components/charts/plot-label';

export type GroupBar = { key: string; label: string; value: number; kind: 'total' | 'split' | 'group'; title: string };

/**
 * The bars of the groups view: σ_μ for reference, its statistical and systematic parts, then each
 * group's impact, largest first. A group's impact is √(V_μG V_GG⁻¹ V_Gμ): what σ_μ loses when
 * the group is held at its best fit.
 */
export function groupBars(result: FitResultHead): GroupBar[] {
  const mu = result.summary?.mu;
  const total = mu?.error ?? null;
  const share = (v: number) => (total ? ` (${Math.round((v * v * 100) / (total * total))} % of σ_μ²)` : '');
  const bars: GroupBar[] = [];
  if (total !== null) bars.push({ key: 'total', label: 'Total σ_μ', value: total, kind: 'total', title: `σ_μ = √V_μμ = ${formatFixed(total, 4)}` });
  if (mu?.stat != null) bars.push({ key: 'stat', label: 'Statistical', value: mu.stat, kind: 'split', title: `σ_stat = ${formatFixed(mu.stat, 4)}${share(mu.stat)}: every θ and γ held` });
  if (mu?.syst != null) bars.push({ key: 'syst', label: 'Systematic (all)', value: mu.syst, kind: 'split', title: `σ_syst = √(σ_μ² − σ_stat²) = ${formatFixed(mu.syst, 4)}${share(mu.syst)}` });
  const groups = [...result.groupedImpacts].sort((a, b) => b.impact - a.impact || a.group.localeCompare(b.group));
  for (const g of groups)
    bars.push({
      key: `g:${g.group}`,
      label: g.group,
      value: g.impact,
      kind: 'group',
      title: `${g.group}: ${formatFixed(g.impact, 4)}${share(g.impact)}${g.parameters.length ? `\n${g.parameters.length} parameters: ${g.parameters.join(', ')}` : ''}`,
    });
  return bars;
}

const W = 600;
const ROW = 22;
const M = { left: 170, right: 70, top: 22, bottom: 36 };

/** Sorted horizontal bars: the parts of σ_μ first, then every group. */
export function GroupsChart({ bars, title }: { bars: GroupBar[]; title: string }) {
  const ref = useRef<SVGSVGElement>(null);
  const H = M.top + bars.length * ROW + M.bottom;
  const max = Math.max(...bars.map((b) => b.value), 1e-9);
  const x = scaleLinear().domain([0, max]).range([M.left, W - M.right]).nice();
  const colour = { total: theme.ink, split: theme.teal, group: theme.plum } as const;
  const firstGroup = bars.findIndex((b) => b.kind === 'group');
  return (
    <ChartFigure title={title} svg={ref}>
      <svg
        ref={ref}
        viewBox={`0 0 ${W} ${H}`}
        className="h-auto w-full max-w-[44rem]"
        role="img"
        aria-label={`${title}: ${bars.map((b) => `${b.label} ${formatFixed(b.value, 3)}`).join('; ')}`}
      >
        <PlotLabel x={M.left} y={13} />
        {firstGroup > 0 && <line x1={8} x2={W - 8} y1={M.top + firstGroup * ROW} y2={M.top + firstGroup * ROW} stroke={theme.rule} strokeDasharray="3 3" />}
        {bars.map((b, i) => {
          const cy = M.top + i * ROW + ROW / 2;
          return (
            <g key={b.key}>
              <text x={M.left - 8} y={cy} dy="0.32em" textAnchor="end" style={{ fontSize: 11, fill: theme.ink, fontWeight: b.kind === 'group' ? 400 : 600 }}>
                {b.label}
              </text>
              <rect x={M.left} y={cy - 6} width={Math.max(0.5, x(b.value) - M.left)} height={12} fill={colour[b.kind]} fillOpacity={b.kind === 'total' ? 0.85 : 0.8} rx={1.5} />
              <text x={x(b.value) + 5} y={cy} dy="0.32em" style={{ fontSize: 10, fill: theme.inkMuted }}>
                {formatFixed(b.value, 3)}
              </text>
              <rect x={0} y={cy - ROW / 2} width={W} height={ROW} fill="transparent">
                <title>{b.title}</title>
              </rect>
            </g>
          );
        })}
        <BottomAxis scale={x} y={M.top + bars.length * ROW} title="uncertainty on μ (multiples of the nominal signal)" />
      </svg>
    </ChartFigure>
  );
}

export function GroupsView({ result }: { result: FitResultHead }) {
  const bars = groupBars(result);
  if (result.summary?.mu.fixed) return <p className="text-sm text-ink-muted">μ was held in this fit (control regions only), so there is no uncertainty on μ to split.</p>;
  return (
    <div className="flex flex-col gap-3">
      <Panel>
        <GroupsChart bars={bars} title="Uncertainty on μ̂ by group" />
      </Panel>
      <p className="max-w-prose text-xs text-ink-muted">
        A group's impact is the part of σ_μ that disappears when the group's parameters are held at their best fit: √(V_μG V_GG⁻¹ V_Gμ). Groups overlap in the
        covariance, so their squares need not add up to σ_syst². Hover over a bar for its share of σ_μ² and its parameters.
      </p>
    </div>
  );
}
