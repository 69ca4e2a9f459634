import type { ReactNode } from 'react';
import type { VariationWarningView } from '@shared/schemas/register';
import { Badge } from '../../../components/ui/badge';
import { ShiftPrecision } from './shift-precision';
import { VariationChart, variationRatios, type VariationShape } from './variation-chart';

export type RegionInfo = { label: string; observable: string; unit: string };

function describeSize(v: VariationShape): string {
  if (v.kind === 'scale' && typeof v.up === 'number' && typeof v.down === 'number') return `×${v.up} up, ×${v.down} down`;
  const { up, down } = variationRatios(v);
  const all = [...up, ...down].filter((r): r is number => r !== null);
  if (!all.length) return 'nominal is 0 in every bin';
  const largest = Math.max(...all.map((r) => Math.abs(r - 1)));
  return `up to ${(largest * 100).toFixed(largest >= 0.1 ? 1 : 2)} % in a bin`;
}

/** The name of each warning, in the words of docs/uploads.md. */
const WARNING_NAMES: Record<string, string> = {
  'same-side': 'Same side',
  'over-100-percent': 'Over 100 %',
  'zero-effect': 'No effect',
  'flat-shape': 'Flat shape',
  'empty-nominal': 'Empty nominal',
  'within-noise': 'Within noise',
};

export function Warnings({ warnings }: { warnings: VariationWarningView[] }) {
  if (!warnings.length) return null;
  return (
    <ul className="flex flex-col gap-1" aria-label="Warnings">
      {warnings.map((w, i) => (
        <li key={i} className="rounded border border-amber/40 bg-amber-soft/70 px-2 py-1 text-xs text-amber-ink">
          <span className="font-semibold">{WARNING_NAMES[w.code] ?? 'Warning'}: </span>
          {w.message}
        </li>
      ))}
    </ul>
  );
}

/** One effect of an entry (or of an upload being previewed) on one region × process. */
export function EffectCard({
  region,
  process,
  v,
  warnings,
  regionInfo,
  processLabel,
  badges,
  footer,
  wide = false,
  name,
}: {
  region: string;
  process: string;
  v: VariationShape;
  warnings: VariationWarningView[];
  regionInfo?: RegionInfo;
  processLabel?: string;
  badges?: ReactNode;
  footer?: ReactNode;
  /** the card takes the whole row of its grid (an editor is open in it) */
  wide?: boolean;
  /** the card's accessible name, when region and process do not tell it from its neighbours */
  name?: string;
}) {
  const title = `${regionInfo?.label || region} × ${processLabel || process}`;
  const warnBins = warnings.flatMap((w) => w.bins ?? []);
  return (
    <article aria-label={name ?? `Effect on ${region} × ${process}`} className={`flex min-w-0 flex-col gap-2 rounded-lg border border-rule bg-paper-raised px-3 py-2.5 ${wide ? 'col-span-full' : ''}`}>
      <header className="flex flex-wrap items-center gap-2">
        <h3 className="text-sm font-semibold">
          <span className="font-mono">{region}</span> <span className="text-ink-muted">×</span> <span className="font-mono">{process}</span>
        </h3>
        <Badge tone={v.kind === 'shape' ? 'teal' : 'neutral'} title={v.kind === 'shape' ? 'Per-bin templates for up and down' : 'One yield ratio for up and one for down, the same in every bin'}>
          {v.kind}
        </Badge>
        {warnings.length > 0 && (
          <Badge tone="amber" title="Validation warnings: saved with the effect and shown in the register">
            {warnings.length} warning{warnings.length === 1 ? '' : 's'}
          </Badge>
        )}
        {badges}
      </header>
      <p className="text-xs text-ink-muted" title={title}>
        {describeSize(v)}
        {regionInfo && (
          <>
            {' · '}
            {regionInfo.observable}
            {regionInfo.unit ? ` in ${regionInfo.unit}` : ''}
          </>
        )}
      </p>
      <VariationChart v={v} unit={regionInfo?.unit} warnBins={warnBins} label={`Variation of ${title}`} />
      {v.kind === 'shape' && v.precision && <ShiftPrecision precision={v.precision} label={`Precision of the shifts on ${region} × ${process}`} />}
      <Warnings warnings={warnings} />
      {footer}
    </article>
  );
}
