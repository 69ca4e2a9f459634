import { useState, type FormEvent } from 'react';
import { hypothesisParameterSchema } from '@shared/schemas/signal-hypotheses';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { useSetHypothesisParameter } from '../api/set-hypothesis-parameter';

/** Name and unit of the parameter the signal hypotheses differ in (e.g. mass, GeV). */
export function HypothesisParameterForm({ slug, parameter, onDone }: { slug: string; parameter: { name: string; unit: string } | null; onDone: () => void }) {
  const [name, setName] = useState(parameter?.name ?? '');
  const [unit, setUnit] = useState(parameter?.unit ?? '');
  const [local, setLocal] = useState<FieldErrors>({});
  const save = useSetHypothesisParameter(slug);

  function submit(e: FormEvent) {
    e.preventDefault();
    const checked = checkWith(hypothesisParameterSchema, { name, unit });
    if (!checked.ok) return setLocal(checked.errors);
    setLocal({});
    save.mutate(checked.data, { onSuccess: onDone });
  }

  const err = (f: string) => fieldError(local, save.error, f);
  return (
    <form onSubmit={submit} aria-label="The parameter of the signal hypotheses" className="flex flex-col gap-3" noValidate>
      {save.error && <FormError error={save.error} />}
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4">
        <TextField label="Parameter" value={name} onChange={(e) => setName(e.target.value)} error={err('name')} hint="What the hypotheses differ in, e.g. mass" required />
        <TextField label="Unit" value={unit} onChange={(e) => setUnit(e.target.value)} error={err('unit')} hint="e.g. GeV; empty for a number without one" />
      </div>
      <div className="flex gap-2">
        <Button type="submit" variant="primary" busy={save.isPending}>
          Save parameter
        </Button>
        {parameter && (
          <Button variant="ghost" onClick={onDone}>
            Cancel
          </Button>
        )}
      </div>
    </form>
  );
}
