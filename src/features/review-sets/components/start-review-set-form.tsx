import { useState } from 'react';
import type { ModelVersion } from '@shared/schemas/fits';
import type { ReviewSetDetail } from '@shared/schemas/review-sets';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { SelectField, TextField } from '../../../components/ui/field';
import { fieldError } from '../../../lib/form-issues';
import { useStartReviewSet } from '../api/start-review-set';

/** Queue the standard review set on a frozen version (the members are the server's, by the blinding). */
export function StartReviewSetForm({ slug, versions, blinded, onStarted }: { slug: string; versions: ModelVersion[]; blinded: boolean; onStarted?: (set: ReviewSetDetail) => void }) {
  const start = useStartReviewSet(slug);
  const [version, setVersion] = useState<number | null>(versions[0]?.number ?? null);
  const [label, setLabel] = useState('');
  if (versions.length === 0) return <p className="text-sm text-ink-muted">Freeze a model version first: every fit of a set runs on the same frozen version.</p>;
  return (
    <form
      aria-label="Start a review set"
      className="flex flex-col gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        if (version === null) return;
        start.mutate({ version, label: label.trim() }, { onSuccess: (set) => onStarted?.(set) });
      }}
    >
      <FormError error={start.error} />
      <p className="text-xs text-ink-muted">
        One fit each: control regions only; expected at μ = 1 and at μ = 0 with the background the control regions measured;{' '}
        {blinded ? 'every region with μ hidden (the analysis is blinded)' : 'the observed fit'}; statistics only; and each group of systematics held.
      </p>
      <SelectField label="Model version of the set" value={version ?? ''} onChange={(e) => setVersion(Number(e.target.value))} error={fieldError({}, start.error, 'version')}>
        {versions.map((v) => (
          <option key={v.number} value={v.number}>
            Version {v.number}
            {v.note ? `: ${v.note.slice(0, 40)}` : ''}
          </option>
        ))}
      </SelectField>
      <TextField label="Label of the set" value={label} maxLength={200} onChange={(e) => setLabel(e.target.value)} placeholder="e.g. before asking to unblind" error={fieldError({}, start.error, 'label')} />
      <div>
        <Button type="submit" variant="primary" busy={start.isPending}>
          Start the review set
        </Button>
      </div>
    </form>
  );
}
