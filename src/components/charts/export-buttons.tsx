import { useState, type RefObject } from 'react';
import { downloadPng, downloadSvg } from '../../lib/chart-export';
import { Button } from '../ui/button';

type Saver = () => Promise<void>;

/**
 * "SVG" and "PNG" buttons for a chart. Give the chart's `<svg>` element, or your own savers
 * (a canvas chart makes its PNG from its pixels and its SVG from rectangles).
 */
export function ExportButtons({ title, svg, onSvg, onPng }: { title: string; svg?: RefObject<SVGSVGElement | null>; onSvg?: Saver; onPng?: Saver }) {
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState<'svg' | 'png' | null>(null);
  const run = (kind: 'svg' | 'png') => async () => {
    setError(null);
    setBusy(kind);
    try {
      const own = kind === 'svg' ? onSvg : onPng;
      if (own) await own();
      else if (svg?.current) await (kind === 'svg' ? downloadSvg : downloadPng)(svg.current, title);
      else throw new Error('The chart is not drawn yet.');
    } catch (e) {
      setError(e instanceof Error ? e.message : String(e));
    } finally {
      setBusy(null);
    }
  };
  return (
    <div className="flex items-center gap-1">
      <Button size="sm" variant="ghost" busy={busy === 'svg'} onClick={run('svg')} aria-label={`Download ${title} as SVG`} title="Download as SVG (vector, for papers and slides)">
        SVG
      </Button>
      <Button size="sm" variant="ghost" busy={busy === 'png'} onClick={run('png')} aria-label={`Download ${title} as PNG`} title="Download as PNG (image, twice the screen size)">
        PNG
      </Button>
      {error && (
        <span role="alert" className="text-xs text-danger">
          {error}
        </span>
      )}
    </div>
  );
}
