import { useId } from 'react';
import type { Member } from '@shared/schemas/api';
import { ROLE_LABELS } from '@shared/permissions';
import { SelectField, TextAreaField, TextField } from '../ui/field';

/** What the entry forms edit, as the fields hold it (references one per line). */
export type EntryDraft = { key: string; label: string; group: string; ownerId: string; description: string; justification: string; references: string };

export const emptyDraft: EntryDraft = { key: '', label: '', group: '', ownerId: '', description: '', justification: '', references: '' };

/** The request body a draft stands for (before the shared schema checks it). */
export function draftBody(d: EntryDraft) {
  return {
    label: d.label.trim(),
    group: d.group.trim() || null,
    ownerId: d.ownerId ? Number(d.ownerId) : null,
    description: d.description,
    justification: d.justification,
    references: d.references
      .split('\n')
      .map((r) => r.trim())
      .filter(Boolean),
  };
}

type Props = {
  draft: EntryDraft;
  onChange: (d: EntryDraft) => void;
  error: (field: string) => string | undefined;
  members: Member[];
  groups: string[];
  withKey?: boolean;
  ownerEditable?: boolean;
  ownerName?: string | null;
};

/** Owners are usually systematics contacts, then analysts; everyone in the analysis may own an entry. */
const OWNER_ORDER = { contact: 0, analyst: 1, convener: 2, reader: 3 } as const;

export function EntryFields({ draft, onChange, error, members, groups, withKey = false, ownerEditable = true, ownerName }: Props) {
  const listId = useId();
  const set = (field: keyof EntryDraft) => (e: { target: { value: string } }) => onChange({ ...draft, [field]: e.target.value });
  const owners = [...members].sort((a, b) => OWNER_ORDER[a.role] - OWNER_ORDER[b.role] || a.name.localeCompare(b.name));
  return (
    <div className="grid gap-3 md:grid-cols-2">
      {withKey && (
        <TextField
          label="Key"
          name="key"
          required
          value={draft.key}
          onChange={set('key')}
          error={error('key')}
          hint="The nuisance parameter's name in the model: a letter, then letters, digits, _ . or -"
        />
      )}
      <TextField label="Label" name="label" required value={draft.label} onChange={set('label')} error={error('label')} className={withKey ? '' : 'md:col-span-2'} />
      <div>
        <TextField label="Group" name="group" list={listId} value={draft.group} onChange={set('group')} error={error('group')} hint="Pick a group or type a new name; leave empty for none." />
        <datalist id={listId}>
          {groups.map((g) => (
            <option key={g} value={g} />
          ))}
        </datalist>
      </div>
      {ownerEditable ? (
        <SelectField label="Owner" name="ownerId" value={draft.ownerId} onChange={set('ownerId')} error={error('ownerId')}>
          <option value="">Unassigned</option>
          {owners.map((m) => (
            <option key={m.userId} value={String(m.userId)}>
              {m.name} ({ROLE_LABELS[m.role].toLowerCase()})
            </option>
          ))}
        </SelectField>
      ) : (
        <div className="flex flex-col gap-1">
          <span className="text-xs font-semibold text-ink-soft">Owner</span>
          <p className="py-1.5 text-sm" title="Only analysts reassign entries">
            {ownerName ?? <span className="text-ink-muted">Unassigned</span>}
          </p>
        </div>
      )}
      <TextAreaField label="Description" name="description" rows={3} value={draft.description} onChange={set('description')} error={error('description')} className="md:col-span-2" hint="What the uncertainty is and how its variations were made." />
      <TextAreaField label="Justification" name="justification" rows={3} value={draft.justification} onChange={set('justification')} error={error('justification')} className="md:col-span-2" hint="Why the ±1σ variations have this size." />
      <TextAreaField
        label="References"
        name="references"
        rows={2}
        value={draft.references}
        onChange={set('references')}
        error={error('references')}
        className="md:col-span-2"
        hint="One per line: notes, links, internal documents."
      />
    </div>
  );
}
