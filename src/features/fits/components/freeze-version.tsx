import { useState } from 'react';
import type { ModelVersion } from '@shared/schemas/fits';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { CheckboxField, TextAreaField } from '../../../components/ui/field';
import { fieldError } from '../../../lib/form-issues';
import { formatDateTime } from '../../../lib/format';
import { useFreezeVersion, useStaleEffects, useVersionChecklist } from '../api/freeze-version';
import { ChecklistView } from '../../../components/status/approval-checklist';

/** Freeze the working model into the next numbered version; a convener may mark it as put forward for approval. */
export function FreezeVersionForm({ slug, mayMarkForApproval, onFrozen }: { slug: string; mayMarkForApproval: boolean; onFrozen?: (v: ModelVersion) => void }) {
  const [note, setNote] = useState('');
  const [forApproval, setForApproval] = useState(false);
  const [reason, setReason] = useState('');
  const freeze = useFreezeVersion(slug);
  const gates = useVersionChecklist(slug, mayMarkForApproval && forApproval);
  const stale = useStaleEffects(slug);
  const [keep, setKeep] = useState<Record<number, 'relative' | 'absolute'>>({});
  const open = gates.data && !gates.data.ready;
  return (
    <form
      className="flex flex-col gap-3"
      onSubmit={(e) => {
        e.preventDefault();
        freeze.mutate(
          {
            note: note.trim(),
            forApproval: mayMarkForApproval && forApproval,
            ...(mayMarkForApproval && forApproval && open && reason.trim() ? { overrideReason: reason.trim() } : {}),
            ...(stale.data?.length ? { staleChoices: stale.data.filter((e) => keep[e.effectId]).map((e) => ({ effectId: e.effectId, keep: keep[e.effectId] })) } : {}),
          },
          {
            onSuccess: (v) => {
              setNote('');
              setForApproval(false);
              setReason('');
              setKeep({});
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
      {stale.data && stale.data.length > 0 && (
        <fieldset className="flex flex-col gap-1.5 rounded-md border border-amber/40 bg-amber-soft/40 px-3 py-2 text-sm">
          <legend className="px-1 text-xs font-semibold text-amber-ink">Variations made against a nominal that has changed since</legend>
          <p className="text-xs text-ink-soft">
            Choose for each how this version keeps it: as a relative shift (its variation rescaled bin by bin by new/old nominal) or as the absolute yields uploaded. The choice is recorded in the revision.
          </p>
          {stale.data.map((e) => (
            <div key={e.effectId} className="flex flex-wrap items-center gap-x-3 gap-y-1">
              <span className="min-w-48 font-mono text-xs">
                {e.entry} · {e.process} in {e.region}
                <span className="ml-1 font-sans text-ink-muted">(bin{e.bins.length === 1 ? '' : 's'} {e.bins.slice(0, 6).join(', ')}{e.bins.length > 6 ? ', …' : ''})</span>
              </span>
              {(['relative', 'absolute'] as const).map((k) => (
                <label key={k} className="flex items-center gap-1 text-xs">
                  <input type="radio" name={`stale-${e.effectId}`} checked={keep[e.effectId] === k} onChange={() => setKeep((m) => ({ ...m, [e.effectId]: k }))} />
                  {k === 'relative' ? 'relative shift' : 'absolute yields'}
                </label>
              ))}
            </div>
          ))}
          {fieldError({}, freeze.error, 'staleChoices') && <p className="text-xs text-danger">{fieldError({}, freeze.error, 'staleChoices')}</p>}
        </fieldset>
      )}
      {mayMarkForApproval && (
        <CheckboxField
          label="Put this version forward for approval"
          checked={forApproval}
          onChange={(e) => setForApproval(e.target.checked)}
          hint="Marks the version as the one the team asks the collaboration to review: every active entry accepted and no question open, or your written reason."
        />
      )}
      {mayMarkForApproval && forApproval && gates.data && <ChecklistView checklist={gates.data} label="For approval" />}
      {mayMarkForApproval && forApproval && open && (
        <TextAreaField
          label="Why freeze it for approval with these items open"
          rows={2}
          maxLength={4000}
          value={reason}
          onChange={(e) => setReason(e.target.value)}
          error={fieldError({}, freeze.error, 'overrideReason')}
          hint="Shown on the version and in the approval pack, with the open items as they stand."
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
          {v.override && (
            <p className="text-sm text-amber-ink" title={`Open when frozen:\n${v.override.openItems.join('\n')}`}>
              Frozen for approval by {v.override.by} with {v.override.openItems.length} open item{v.override.openItems.length === 1 ? '' : 's'}: {v.override.reason}
            </p>
          )}
          <p className="text-xs text-ink-muted">
            <span title="Regions in this version">{v.counts.regions} regions</span> · <span title="Processes in this version">{v.counts.processes} processes</span> ·{' '}
            <span title="Systematic uncertainties (nuisance parameters) in this version">{v.counts.systematics} systematics</span> ·{' '}
            <span className="font-mono" title={`SHA-256 of the frozen model document: ${v.sha256}`}>
              {v.sha256.slice(0, 10)}
            </span>
            {v.register && (
              <>
                {' '}
                ·{' '}
                <span title="The register as frozen: entries per review state">
                  {Object.entries(v.register)
                    .map(([state, n]) => `${n} ${state.replace('_', ' ')}`)
                    .join(', ')}
                </span>
              </>
            )}
          </p>
        </li>
      ))}
    </ol>
  );
}
