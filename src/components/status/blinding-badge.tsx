import type { Blinding } from '@shared/schemas/api';
import { Badge } from '../ui/badge';

const LABEL: Record<Blinding, { text: string; title: string; tone: 'amber' | 'teal' | 'neutral' }> = {
  blinded: {
    text: 'Blinded',
    tone: 'amber',
    title: 'Signal-region data are withheld from every client, and observed-data fits that include a signal region are refused.',
  },
  unblinding_requested: {
    text: 'Unblinding requested',
    tone: 'amber',
    title: 'An analyst has asked to unblind; a convener must approve. Signal-region data stay withheld until then.',
  },
  unblinded: { text: 'Unblinded', tone: 'teal', title: 'Observed data in every region are visible and may be fitted.' },
};

export function BlindingBadge({ blinding }: { blinding: Blinding }) {
  const l = LABEL[blinding];
  return (
    <Badge tone={l.tone} title={l.title}>
      <svg aria-hidden viewBox="0 0 12 12" className="size-3">
        {blinding === 'unblinded' ? (
          <circle cx="6" cy="6" r="3.2" fill="none" stroke="currentColor" strokeWidth="1.6" />
        ) : (
          <>
            <circle cx="6" cy="6" r="3.2" fill="currentColor" />
            <path d="M1.5 10.5 10.5 1.5" stroke="currentColor" strokeWidth="1.4" />
          </>
        )}
      </svg>
      {l.text}
    </Badge>
  );
}
