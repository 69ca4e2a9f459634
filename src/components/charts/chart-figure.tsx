import type { ReactNode, RefObject } from 'react';
import { ExportButtons } from './export-buttons';

/** A chart with its title and its SVG/PNG downloads above it; the chart (an <svg> on `svg`) and any notes are the children. */
export function ChartFigure({ title, svg, children }: { title: string; svg: RefObject<SVGSVGElement | null>; children: ReactNode }) {
  return (
    <figure className="flex flex-col gap-1">
      <div className="flex items-center justify-between gap-2">
        <figcaption className="text-sm font-semibold text-ink">{title}</figcaption>
        <ExportButtons title={title} svg={svg} />
      </div>
      {children}
    </figure>
  );
}
