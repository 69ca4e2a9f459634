import { theme } from '../../../lib/palette';

export type ShareItem = { key: string; label: string; detail?: string; share: number; title: string; tone?: 'amber' | 'teal' | 'muted' };

const TONE = { amber: theme.amber, teal: theme.teal, muted: theme.rule } as const;

/** A share of a whole (0–1) in whole per cent, with "< 1 %" for small non-zero shares. */
export function formatShare(share: number): string {
  if (share > 0 && share < 0.005) return '< 1 %';
  return `${Math.round(share * 100)} %`;
}

/** A list of shares of one whole, largest first, each with a bar scaled to the largest. */
export function ShareBars({ items, label }: { items: ShareItem[]; label: string }) {
  const sorted = [...items].sort((a, b) => b.share - a.share);
  const max = Math.max(1e-12, ...sorted.map((i) => i.share));
  return (
    <ol aria-label={label} className="flex flex-col gap-1">
      {sorted.map((i) => (
        <li key={i.key} title={i.title} className="grid grid-cols-[minmax(10rem,24rem)_1fr_3.5rem] items-center gap-2 text-sm">
          <span className="truncate">
            {i.label}
            {i.detail && <span className="ml-1.5 font-mono text-2xs text-ink-muted">{i.detail}</span>}
          </span>
          <span aria-hidden className="h-3 rounded-sm bg-paper-sunk">
            <span className="block h-3 rounded-sm" style={{ width: `${(i.share / max) * 100}%`, background: TONE[i.tone ?? 'teal'] }} />
          </span>
          <span className="text-right tabular-nums">{formatShare(i.share)}</span>
        </li>
      ))}
    </ol>
  );
}
