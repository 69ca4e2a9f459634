import type { ReactNode } from 'react';

export type Tone = 'neutral' | 'teal' | 'amber' | 'plum' | 'danger' | 'ink';

const tones: Record<Tone, string> = {
  neutral: 'bg-paper-sunk text-ink-soft border-rule',
  teal: 'bg-teal-soft text-teal-ink border-teal/30',
  amber: 'bg-amber-soft text-amber-ink border-amber/40',
  plum: 'bg-plum-soft text-plum border-plum/30',
  danger: 'bg-danger-soft text-danger border-danger/30',
  ink: 'bg-ink text-paper border-ink',
};

export function Badge({ tone = 'neutral', title, children, className = '' }: { tone?: Tone; title?: string; children: ReactNode; className?: string }) {
  return (
    <span title={title} className={`inline-flex items-center gap-1 rounded-full border px-2 py-px text-xs font-medium whitespace-nowrap ${tones[tone]} ${className}`}>
      {children}
    </span>
  );
}
