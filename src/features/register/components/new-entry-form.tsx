import { useState, type FormEvent } from 'react';
import { entryInputSchema } from '@shared/schemas/register';
import type { Member } from '@shared/schemas/api';
import { draftBody, emptyDraft, EntryFields } from '../../../components/forms/entry-fields';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { useCreateEntry } from '../api/create-entry';

export function NewEntryForm({ slug, members, groups, onCreated, onCancel }: { slug: string; members: Member[]; groups: string[]; onCreated: (key: string) => void; onCancel: () => void }) {
  const [draft, setDraft] = useState(emptyDraft);
  const [local, setLocal] = useState<FieldErrors>({});
  const create = useCreateEntry(slug);

  function submit(e: FormEvent) {
    e.preventDefault();
    const checked = checkWith(entryInputSchema, { key: draft.key.trim(), ...draftBody(draft) });
    if (!checked.ok) return setLocal(checked.errors);
    setLocal({});
    create.mutate(checked.data, { onSuccess: (entry) => onCreated(entry.key) });
  }

  return (
    <form onSubmit={submit} aria-label="New entry" className="flex flex-col gap-3" noValidate>
      {create.error && <FormError error={create.error} />}
      <EntryFields draft={draft} onChange={setDraft} error={(f) => fieldError(local, create.error, f)} members={members} groups={groups} withKey />
      <div className="flex gap-2">
        <Button type="submit" variant="primary" busy={create.isPending}>
          Create entry
        </Button>
        <Button variant="ghost" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
