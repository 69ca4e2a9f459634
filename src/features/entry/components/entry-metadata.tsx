import { useState, type FormEvent } from 'react';
import type { Member } from '@shared/schemas/api';
import { entryPatchSchema, type EntryDetail } from '@shared/schemas/register';
import { draftBody, EntryFields, type EntryDraft } from '../../../components/forms/entry-fields';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { isApiRequestError } from '../../../lib/api-client';
import { useUpdateEntry } from '../api/update-entry';

function draftOf(e: EntryDetail): EntryDraft {
  return {
    key: e.key,
    label: e.label,
    group: e.group ?? '',
    ownerId: e.owner ? String(e.owner.id) : '',
    description: e.description,
    justification: e.justification,
    references: e.references.join('\n'),
  };
}

function Text({ value, empty }: { value: string; empty: string }) {
  return value.trim() ? <p className="text-sm whitespace-pre-wrap text-ink">{value}</p> : <p className="text-sm text-ink-muted">{empty}</p>;
}

/** References that look like web addresses become links. */
function Reference({ text }: { text: string }) {
  return /^https?:\/\/\S+$/.test(text) ? (
    <a href={text} className="break-all text-teal-ink underline" rel="noreferrer noopener" target="_blank">
      {text}
    </a>
  ) : (
    <span>{text}</span>
  );
}

export function EntryMetadata({ slug, entry, members, groups }: { slug: string; entry: EntryDetail; members: Member[]; groups: string[] }) {
  const [editing, setEditing] = useState(false);
  const [draft, setDraft] = useState<EntryDraft>(() => draftOf(entry));
  const [local, setLocal] = useState<FieldErrors>({});
  const [notice, setNotice] = useState<string | null>(null);
  const update = useUpdateEntry(slug, entry.key);

  const start = () => {
    setDraft(draftOf(entry));
    setLocal({});
    setNotice(null);
    update.reset();
    setEditing(true);
  };

  function submit(e: FormEvent) {
    e.preventDefault();
    const { ownerId, ...rest } = draftBody(draft);
    // The owner is sent only by those who may reassign; everyone else leaves it as it is.
    const body = { ...rest, ...(entry.can.reassign ? { ownerId } : {}), version: entry.version };
    const checked = checkWith(entryPatchSchema, body);
    if (!checked.ok) return setLocal(checked.errors);
    setLocal({});
    update.mutate(checked.data, {
      onSuccess: () => {
        setEditing(false);
        setNotice(entry.state === 'accepted' ? 'Saved. The entry was accepted, so the change sends it back to review (submitted).' : 'Saved.');
      },
      onError: (err) => {
        if (isApiRequestError(err) && err.status === 409) {
          setEditing(false);
          setNotice(null);
        }
      },
    });
  }

  const conflict = isApiRequestError(update.error) && update.error.status === 409 ? update.error : null;

  if (editing)
    return (
      <form onSubmit={submit} aria-label="Edit entry" className="flex flex-col gap-3" noValidate>
        {update.error && !conflict && <FormError error={update.error} />}
        <EntryFields
          draft={draft}
          onChange={setDraft}
          error={(f) => fieldError(local, update.error, f)}
          members={members}
          groups={groups}
          ownerEditable={entry.can.reassign}
          ownerName={entry.owner?.name}
        />
        {entry.state === 'accepted' && <p className="text-xs text-amber-ink">This entry is accepted: saving a change returns it to review.</p>}
        <div className="flex gap-2">
          <Button type="submit" variant="primary" busy={update.isPending}>
            Save changes
          </Button>
          <Button variant="ghost" onClick={() => setEditing(false)}>
            Cancel
          </Button>
        </div>
      </form>
    );

  return (
    <div className="flex flex-col gap-3">
      {conflict && (
        <div role="alert" className="rounded-md border border-amber/40 bg-amber-soft/70 px-3 py-2 text-sm text-amber-ink">
          <p className="font-semibold">Someone else changed this entry while you were editing.</p>
          <p>{conflict.message} The page now shows their version.</p>
        </div>
      )}
      {notice && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {notice}
        </p>
      )}
      <dl className="grid gap-x-6 gap-y-3 sm:grid-cols-[8rem_1fr]">
        <dt className="text-xs font-semibold text-ink-soft">Owner</dt>
        <dd className="text-sm">{entry.owner ? <span title={entry.owner.email}>{entry.owner.name}</span> : <span className="text-ink-muted">Unassigned</span>}</dd>
        <dt className="text-xs font-semibold text-ink-soft">Group</dt>
        <dd className="text-sm">{entry.group ?? <span className="text-ink-muted">none</span>}</dd>
        <dt className="text-xs font-semibold text-ink-soft">Description</dt>
        <dd>
          <Text value={entry.description} empty="No description yet." />
        </dd>
        <dt className="text-xs font-semibold text-ink-soft">Justification</dt>
        <dd>
          <Text value={entry.justification} empty="No justification yet." />
        </dd>
        <dt className="text-xs font-semibold text-ink-soft">References</dt>
        <dd className="text-sm">
          {entry.references.length ? (
            <ul className="list-disc pl-4">
              {entry.references.map((r, i) => (
                <li key={i}>
                  <Reference text={r} />
                </li>
              ))}
            </ul>
          ) : (
            <span className="text-ink-muted">none</span>
          )}
        </dd>
      </dl>
      {entry.can.edit && (
        <div>
          <Button onClick={start}>Edit details</Button>
        </div>
      )}
    </div>
  );
}
