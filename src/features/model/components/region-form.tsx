import { useState, type FormEvent } from 'react';
import type { Region } from '@shared/schemas/api';
import { regionInputSchema, regionPatchSchema } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { SelectField, TextAreaField, TextField } from '../../../components/ui/field';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { formatNumberList, parseNumberList } from '../../../lib/numbers';
import { useCreateRegion } from '../api/create-region';
import { useUpdateRegion } from '../api/update-region';

const ROLES = [
  { value: 'signal', label: 'Signal', hint: 'where the signal is expected; its data are withheld while blinded' },
  { value: 'control', label: 'Control', hint: 'constrains backgrounds and nuisance parameters' },
  { value: 'validation', label: 'Validation', hint: 'checks the model without constraining it' },
] as const;

/** Edges given as a list must increase strictly; the first that does not is named. */
export function edgesProblem(edges: number[]): string | undefined {
  for (let i = 1; i < edges.length; i++) if (!(edges[i] > edges[i - 1])) return `must increase: edge ${i + 1} (${edges[i]}) is not above edge ${i} (${edges[i - 1]})`;
  return undefined;
}

/** Add a region, or edit one (its key stays). */
export function RegionForm({ slug, region, onDone }: { slug: string; region?: Region; onDone: () => void }) {
  const [key, setKey] = useState(region?.key ?? '');
  const [label, setLabel] = useState(region?.label ?? '');
  const [role, setRole] = useState<Region['role']>(region?.role ?? 'control');
  const [observable, setObservable] = useState(region?.observable ?? '');
  const [unit, setUnit] = useState(region?.unit ?? '');
  const [edges, setEdges] = useState(formatNumberList(region?.edges));
  const [local, setLocal] = useState<FieldErrors>({});
  const create = useCreateRegion(slug);
  const update = useUpdateRegion(slug);
  const mutation = region ? update : create;

  const parsed = parseNumberList(edges);
  const bins = parsed.values ? Math.max(0, parsed.values.length - 1) : 0;

  function submit(e: FormEvent) {
    e.preventDefault();
    const errors: FieldErrors = {};
    if (parsed.error !== null) errors.edges = parsed.error;
    const body = { label: label.trim(), role, observable: observable.trim(), unit: unit.trim(), edges: parsed.values ?? [] };
    const checked = region ? checkWith(regionPatchSchema, body) : checkWith(regionInputSchema, { key: key.trim(), ...body });
    if (!checked.ok) Object.assign(errors, { ...checked.errors, ...errors });
    const order = parsed.values && edgesProblem(parsed.values);
    if (order && !errors.edges) errors.edges = order;
    setLocal(errors);
    if (Object.keys(errors).length || !checked.ok) return;
    if (region) update.mutate({ key: region.key, body: checked.data }, { onSuccess: onDone });
    else create.mutate(checked.data as Parameters<typeof create.mutate>[0], { onSuccess: onDone });
  }

  const err = (f: string) => fieldError(local, mutation.error, f);
  return (
    <form onSubmit={submit} aria-label={region ? `Edit region ${region.key}` : 'Add a region'} className="flex flex-col gap-3" noValidate>
      {mutation.error && <FormError error={mutation.error} />}
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-3">
        {region ? (
          <div className="flex flex-col gap-1">
            <span className="text-xs font-semibold text-ink-soft">Key</span>
            <p className="py-1.5 font-mono text-sm" title="A region's key cannot change: effects and fits refer to it">
              {region.key}
            </p>
          </div>
        ) : (
          <TextField label="Key" value={key} onChange={(e) => setKey(e.target.value)} error={err('key')} required hint="e.g. SR_high; letters, digits, _ . -" />
        )}
        <TextField label="Label" value={label} onChange={(e) => setLabel(e.target.value)} error={err('label')} />
        <SelectField label="Role" value={role} onChange={(e) => setRole(e.target.value as Region['role'])} error={err('role')} hint={ROLES.find((r) => r.value === role)?.hint}>
          {ROLES.map((r) => (
            <option key={r.value} value={r.value}>
              {r.label}
            </option>
          ))}
        </SelectField>
        <TextField label="Observable" value={observable} onChange={(e) => setObservable(e.target.value)} error={err('observable')} required hint="What is binned, e.g. reconstructed mass" />
        <TextField label="Unit" value={unit} onChange={(e) => setUnit(e.target.value)} error={err('unit')} hint="e.g. GeV; empty when dimensionless" />
      </div>
      <TextAreaField
        label="Bin edges"
        rows={2}
        value={edges}
        onChange={(e) => setEdges(e.target.value)}
        error={err('edges')}
        hint={parsed.values && parsed.values.length >= 2 ? `${parsed.values.length} edges: ${bins} bin${bins === 1 ? '' : 's'}${unit ? ` in ${unit}` : ''}. Commas, spaces or one per line.` : 'A comma list from low to high, e.g. 100, 120, 140, 160'}
      />
      <div className="flex gap-2">
        <Button type="submit" variant="primary" busy={mutation.isPending}>
          {region ? 'Save region' : 'Add region'}
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
