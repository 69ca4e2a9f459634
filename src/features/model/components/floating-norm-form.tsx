import { useState, type FormEvent } from 'react';
import { floatingNormInputSchema } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { useCreateFloatingNorm } from '../api/create-floating-norm';

/** A free normalisation factor; templates pick it in their editor. */
export function FloatingNormForm({ slug, onDone }: { slug: string; onDone: () => void }) {
  const [key, setKey] = useState('');
  const [label, setLabel] = useState('');
  const [start, setStart] = useState('1');
  const [min, setMin] = useState('0');
  const [max, setMax] = useState('10');
  const [local, setLocal] = useState<FieldErrors>({});
  const create = useCreateFloatingNorm(slug);

  function submit(e: FormEvent) {
    e.preventDefault();
    const num = (s: string) => (s.trim() === '' ? undefined : Number(s));
    const checked = checkWith(floatingNormInputSchema, { key: key.trim(), label: label.trim(), start: num(start), min: num(min), max: num(max) });
    const errors: FieldErrors = checked.ok ? {} : checked.errors;
    if (checked.ok && !(checked.data.min < checked.data.max)) errors.min = 'must be below the maximum';
    else if (checked.ok && (checked.data.start < checked.data.min || checked.data.start > checked.data.max)) errors.start = 'must lie between the minimum and the maximum';
    setLocal(errors);
    if (!checked.ok || Object.keys(errors).length) return;
    create.mutate(checked.data, { onSuccess: onDone });
  }

  const err = (f: string) => fieldError(local, create.error, f);
  return (
    <form onSubmit={submit} aria-label="Add a floating normalisation" className="flex flex-col gap-3" noValidate>
      {create.error && <FormError error={create.error} />}
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-5">
        <TextField label="Key" value={key} onChange={(e) => setKey(e.target.value)} error={err('key')} required />
        <TextField label="Label" value={label} onChange={(e) => setLabel(e.target.value)} error={err('label')} />
        <TextField label="Start" inputMode="decimal" value={start} onChange={(e) => setStart(e.target.value)} error={err('start')} hint="Factor on the nominal yield" />
        <TextField label="Minimum" inputMode="decimal" value={min} onChange={(e) => setMin(e.target.value)} error={err('min')} />
        <TextField label="Maximum" inputMode="decimal" value={max} onChange={(e) => setMax(e.target.value)} error={err('max')} />
      </div>
      <div className="flex gap-2">
        <Button type="submit" variant="primary" busy={create.isPending}>
          Add floating normalisation
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
