import { useState, type FormEvent } from 'react';
import type { Model } from '@shared/schemas/api';
import { templateInputSchema } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { FormError } from '../../../components/ui/error-notice';
import { SelectField, TextAreaField } from '../../../components/ui/field';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { formatCount } from '../../../lib/format';
import { formatNumberList, parseNumberList, sum } from '../../../lib/numbers';
import { useDeleteTemplate } from '../api/delete-template';
import { usePutTemplate } from '../api/put-template';

/** How a typed list compares with the region's bins, for the hint under the field. */
function listHint(text: string, bins: number, what: string): string {
  const p = parseNumberList(text);
  if (p.error !== null) return p.error;
  const n = p.values.length;
  if (n === 0) return `${bins} values, one per bin (comma list, or paste a spreadsheet column).`;
  return `${n} of ${bins} values${n === bins ? `; ${what} ${formatCount(Math.round(sum(p.values) * 100) / 100)}` : ''}`;
}

/** The nominal template of one region × process, its variance and its floating normalisation. */
export function TemplateEditor({ slug, model, region, process, onDone }: { slug: string; model: Model; region: string; process: string; onDone: () => void }) {
  const r = model.regions.find((x) => x.key === region)!;
  const existing = model.templates.find((t) => t.region === region && t.process === process);
  const bins = r.edges.length - 1;
  const [nominal, setNominal] = useState(formatNumberList(existing?.nominal));
  const [variance, setVariance] = useState(formatNumberList(existing?.variance));
  const [norm, setNorm] = useState(existing?.floatingNorm ?? '');
  const [local, setLocal] = useState<FieldErrors>({});
  const put = usePutTemplate(slug);
  const remove = useDeleteTemplate(slug);

  function submit(e: FormEvent) {
    e.preventDefault();
    const errors: FieldErrors = {};
    const n = parseNumberList(nominal);
    const v = variance.trim() ? parseNumberList(variance) : null;
    if (n.error !== null) errors.nominal = n.error;
    else if (n.values.length !== bins) errors.nominal = `has ${n.values.length} values but the region has ${bins} bins`;
    if (v?.error) errors.variance = v.error;
    else if (v?.values && v.values.length !== bins) errors.variance = `has ${v.values.length} values but the region has ${bins} bins`;
    const checked = checkWith(templateInputSchema, { nominal: n.values ?? [], variance: v?.values ?? null, floatingNorm: norm || null });
    if (!checked.ok) for (const [k, m] of Object.entries(checked.errors)) errors[k] ??= m;
    setLocal(errors);
    if (!checked.ok || Object.keys(errors).length) return;
    put.mutate({ region, process, body: checked.data }, { onSuccess: onDone });
  }

  const unit = r.unit ? ` ${r.unit}` : '';
  return (
    <form onSubmit={submit} aria-label={`Template ${region} × ${process}`} className="flex flex-col gap-3" noValidate>
      <p className="text-sm text-ink-soft">
        <span className="font-mono">{region}</span> × <span className="font-mono">{process}</span>: {bins} bins from {r.edges[0]} to {r.edges[bins]}
        {unit}. Yields in events per bin.
      </p>
      {put.error && <FormError error={put.error} />}
      <TextAreaField
        label="Nominal (events per bin)"
        rows={3}
        value={nominal}
        onChange={(e) => setNominal(e.target.value)}
        error={fieldError(local, put.error, 'nominal')}
        hint={listHint(nominal, bins, 'total')}
      />
      <TextAreaField
        label="Variance (events², optional)"
        rows={2}
        value={variance}
        onChange={(e) => setVariance(e.target.value)}
        error={fieldError(local, put.error, 'variance')}
        hint={variance.trim() ? listHint(variance, bins, 'sum') : 'Sum of squared weights per bin, from limited simulation; empty when not known.'}
      />
      <SelectField label="Floating normalisation" value={norm} onChange={(e) => setNorm(e.target.value)} error={fieldError(local, put.error, 'floatingNorm')} className="max-w-sm">
        <option value="">None (fixed normalisation)</option>
        {model.floatingNorms.map((f) => (
          <option key={f.key} value={f.key}>
            {f.label || f.key} [{f.min}, {f.max}]
          </option>
        ))}
      </SelectField>
      <div className="flex flex-wrap items-start gap-2">
        <Button type="submit" variant="primary" busy={put.isPending}>
          Save template
        </Button>
        <Button variant="ghost" onClick={onDone}>
          Cancel
        </Button>
        {existing && (
          <div className="ml-auto">
            <ConfirmButton
              label="Delete template"
              question={`Delete the template of ${process} in ${region}?`}
              confirmLabel="Delete"
              busy={remove.isPending}
              error={remove.error}
              onConfirm={() => remove.mutate({ region, process }, { onSuccess: onDone })}
            />
          </div>
        )}
      </div>
    </form>
  );
}
