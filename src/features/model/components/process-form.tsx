import { useState, type FormEvent } from 'react';
import type { Process } from '@shared/schemas/api';
import { processInputSchema, processPatchSchema } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { CheckboxField, SelectField, TextField } from '../../../components/ui/field';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { processColour } from '../../../lib/palette';
import { useCreateProcess } from '../api/create-process';
import { useUpdateProcess } from '../api/update-process';

/** Add a process, or edit one. `index` is its position, which picks its palette colour. */
export function ProcessForm({ slug, process, index, onDone }: { slug: string; process?: Process; index: number; onDone: () => void }) {
  const [key, setKey] = useState(process?.key ?? '');
  const [label, setLabel] = useState(process?.label ?? '');
  const [kind, setKind] = useState<Process['kind']>(process?.kind ?? 'background');
  const [ownColour, setOwnColour] = useState(!!process?.colour);
  const [colour, setColour] = useState(processColour(index, process?.colour));
  const [local, setLocal] = useState<FieldErrors>({});
  const create = useCreateProcess(slug);
  const update = useUpdateProcess(slug);
  const mutation = process ? update : create;

  function submit(e: FormEvent) {
    e.preventDefault();
    const body = { label: label.trim(), kind, colour: ownColour ? colour : null };
    const checked = process ? checkWith(processPatchSchema, body) : checkWith(processInputSchema, { key: key.trim(), ...body });
    if (!checked.ok) return setLocal(checked.errors);
    setLocal({});
    if (process) update.mutate({ key: process.key, body: checked.data }, { onSuccess: onDone });
    else create.mutate(checked.data as Parameters<typeof create.mutate>[0], { onSuccess: onDone });
  }

  const err = (f: string) => fieldError(local, mutation.error, f);
  return (
    <form onSubmit={submit} aria-label={process ? `Edit process ${process.key}` : 'Add a process'} className="flex flex-col gap-3" noValidate>
      {mutation.error && <FormError error={mutation.error} />}
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
        {process ? (
          <div className="flex flex-col gap-1">
            <span className="text-xs font-semibold text-ink-soft">Key</span>
            <p className="py-1.5 font-mono text-sm">{process.key}</p>
          </div>
        ) : (
          <TextField label="Key" value={key} onChange={(e) => setKey(e.target.value)} error={err('key')} required />
        )}
        <TextField label="Label" value={label} onChange={(e) => setLabel(e.target.value)} error={err('label')} />
        <SelectField label="Kind" value={kind} onChange={(e) => setKind(e.target.value as Process['kind'])} error={err('kind')} hint={kind === 'signal' ? 'Scaled by the signal strength μ' : 'Not scaled by μ'}>
          <option value="background">Background</option>
          <option value="signal">Signal</option>
        </SelectField>
        <div className="flex flex-col gap-1.5">
          <CheckboxField label="Own colour" checked={ownColour} onChange={(e) => setOwnColour(e.target.checked)} hint={ownColour ? undefined : 'Uses the palette colour for its position'} />
          <div className="flex items-center gap-2">
            <input
              type="color"
              aria-label="Colour"
              value={colour}
              disabled={!ownColour}
              onChange={(e) => setColour(e.target.value)}
              className="h-8 w-12 cursor-pointer rounded border border-rule-strong bg-paper-raised disabled:cursor-not-allowed disabled:opacity-50"
            />
            <span className="font-mono text-xs text-ink-muted">{ownColour ? colour : processColour(index, null)}</span>
          </div>
          {err('colour') && <p className="text-xs font-medium text-danger">{err('colour')}</p>}
        </div>
      </div>
      <div className="flex gap-2">
        <Button type="submit" variant="primary" busy={mutation.isPending}>
          {process ? 'Save process' : 'Add process'}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
