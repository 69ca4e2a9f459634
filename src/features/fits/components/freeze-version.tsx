import { useState } from 'react';
import type { ModelVersion } from '@shared/schemas/fits';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { CheckboxField, TextAreaField } from '../../../components/ui/field';
import { fieldError } from '../../../lib/form-issues';
import { formatDateTime } from '../../../lib/format';
import { useFreezeVersion } from '../api/freeze-version';

/** Freeze the working model into the next numbered version; a convener may mark it as put forward for approval. */
export function FreezeVersionForm({ slug, mayMarkForApproval, onFrozen }: { slug: string; mayMarkForApproval: boolean; onFrozen?: (v: ModelVersion) => void }) {
  const [note, setNote] = useState('');
  const [forApproval, setForApproval] = useState(false);
  const freeze = useFreezeVersion(slug);
  return (
    <form
      className="flex flex-col gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        freeze.mutate(
          { note: note.trim(), forApproval: mayMarkForApproval && forApproval },
          {
            onSuccess: (v) => {
              setNote('');
              setForApproval(false);
              onFrozen?.(v);
            },
          },
        );
      }}
    >
      <FormError error={freeze.error} />
      <TextAreaField
        label="Note"
        rows={2}
        maxLength={2000}
        value={note}
        onChange={(e) => setNote(e.target.value)}
        placeholder="What changed since the last version"
        error={fieldError({}, freeze.error, 'note')}
        hint="The version keeps the model exactly as it is now: regions, processes, templates, data and every register entry's effects."
      />
      {mayMarkForApproval && (
        <CheckboxField
          label="Put this version forward for approval"
          checked={forApproval}
          onChange={(e) => setForApproval(e.target.checked)}
          hint="Marks the version as the one the team asks the collaboration to review."
        />
      )}
      <div>
        <Button type="submit" variant="primary" busy={freeze.isPending}>
          Freeze model version
        </Button>
      </div>
      {freeze.isSuccess && !freeze.isPending && (
        <p role="status" className="text-sm text-teal-ink">
          Version {freeze.data.number} frozen.
        </p>
      )}
    </form>
  );
}

export function VersionsList({ versions }: { versions: ModelVersion[] }) {
  if (versions.length === 0) return <p className="text-sm text-ink-muted">No version frozen yet. A fit runs on a frozen version, so freeze one first.</p>;
  return (
    <ol aria-label="Model versions" className="flex flex-col divide-y divide-rule">
      {versions.map((v) => (
        <li key={v.number} className="flex flex-col gap-0.5 py-2 first:pt-0">
          <div className="flex flex-wrap items-center gap-2">
            <span className="font-semibold text-ink">Version {v.number}</span>
            {v.forApproval && (
              <Badge tone="plum" title="Frozen by a convener as the version put forward for approval">
                for approval
              </Badge>
            )}
            <span className="text-xs text-ink-muted">
              {formatDateTime(v.createdAt)}
              {v.createdBy ? ` · ${v.createdBy}` : ''}
            </span>
          </div>
          {v.note && <p className="text-sm text-ink-soft">{v.note}</p>}
          <p className="text-xs text-ink-muted">
            <span title="Regions in this version">{v.counts.regions} regions</span> · <span title="Processes in this version">{v.counts.processes} processes</span> ·{' '}
            <span title="Systematic uncertainties (nuisance parameters) in this version">{v.counts.systematics} systematics</span> ·{' '}
            <span className="font-mono" title={`SHA-256 of the frozen model document: ${v.sha256}`}>
              {v.sha256.slice(0, 10)}
            </span>
          </p>
        </li>
      ))}
    </ol>
  );
}
