import { createContext, useContext, type ReactNode } from 'react';
import type { PlotLabels } from '@shared/schemas/api';
import { theme } from '../../lib/palette';

/**
 * The labels every chart of an analysis carries (experiment, status, integrated luminosity,
 * centre-of-mass energy), set by a convener on the overview. The analysis layout provides them;
 * a chart draws <PlotLabel> inside its <svg>, so that a downloaded SVG or PNG carries them too.
 */
const PlotLabelsContext = createContext<PlotLabels | null>(null);

export function PlotLabelsProvider({ labels, children }: { labels: PlotLabels | null; children: ReactNode }) {
  return <PlotLabelsContext.Provider value={labels}>{children}</PlotLabelsContext.Provider>;
}

/** The analysis's plot labels, or null outside an analysis. */
export function usePlotLabels(): PlotLabels | null {
  return useContext(PlotLabelsContext);
}

/** "LANTERN Internal" and "38 fb⁻¹ · 9 TeV": the lead in bold, the rest after it; empty parts left out. */
export function plotLabelParts(l: PlotLabels): { lead: string; rest: string } {
  return { lead: [l.experiment, l.status].filter(Boolean).join(' '), rest: [l.luminosity, l.energy].filter(Boolean).join(' · ') };
}

/** The labels as one line of text: "LANTERN Internal · 38 fb⁻¹ · 9 TeV". */
export function plotLabelText(l: PlotLabels): string {
  const { lead, rest } = plotLabelParts(l);
  return [lead, rest].filter(Boolean).join(' · ');
}

/**
 * The plot labels as an SVG <text> at (x, y), the baseline; `anchor` "end" puts it against a
 * right edge. Draws nothing when the analysis has no labels set (or outside an analysis).
 */
export function PlotLabel({ x, y, anchor = 'start', labels, fontSize = 11 }: { x: number; y: number; anchor?: 'start' | 'end'; labels?: PlotLabels | null; fontSize?: number }) {
  const fromContext = usePlotLabels();
  const l = labels ?? fromContext;
  if (!l) return null;
  const { lead, rest } = plotLabelParts(l);
  if (!lead && !rest) return null;
  return (
    <text className="plot-label" x={x} y={y} textAnchor={anchor} fontSize={fontSize} fill={theme.ink} fontFamily="'Public Sans', system-ui, sans-serif">
      {lead && <tspan fontWeight={700}>{lead}</tspan>}
      {rest && <tspan fill={theme.inkMuted}>{lead ? ` · ${rest}` : rest}</tspan>}
    </text>
  );
}
