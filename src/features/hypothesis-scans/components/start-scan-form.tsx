import { useState } from 'react';
import type { HypothesisScan } from '@shared/schemas/hypothesis-scan';
import type { ModelVersion } from '@shared/schemas/fits';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { SelectField, TextField } from '../../../components/ui/field';
import { fieldError, type FieldErrors } from '../../../lib/form-issues';
import { useStartHypothesisScan } from '../api/start-hypothesis-scan';

const whole = (t: string) => (/^\d+$/.test(t.trim()) ? Number(t.trim()) : null);

/**
 * Ask for a scan of a frozen version: observed (once unblinded) or expected, limits, and for the
 * global significance of an observed scan, background-only toys for the upcrossings and for the
 * trials factor directly.
 */
export function StartScanForm({ slug, versions, blinded, onStarted }: { slug: string; versions: ModelVersion[]; blinded: boolean; onStarted?: (scan: HypothesisScan) => void }) {
  const start = useStartHypothesisScan(slug);
  const [version, setVersion] = useState<number | null>(versions[0]?.number ?? null);
  const [dataset, setDataset] = useState<'observed' | 'expected'>(blinded ? 'expected' : 'observed');
  const [upcrossingToys, setUpcrossingToys] = useState('0');
  const [trialsToys, setTrialsToys] = useState('0');
  const [label, setLabel] = useState('');
  const [local, setLocal] = useState<FieldErrors>({});
  if (versions.length === 0) return <p className="text-sm text-ink-muted">Freeze a model version first: a scan runs on a frozen version.</p>;
  return (
    <form
      aria-label="Scan the signal hypotheses"
      className="flex flex-col gap-4"
      noValidate
      onSubmit={(e) => {
        e.preventDefault();
        const errors: FieldErrors = {};
        const up = whole(upcrossingToys);
        const tr = whole(trialsToys);
        if (up === null || up > 2000) errors.upcrossingToys = 'A whole number of toys from 0 to 2 000.';
        if (tr === null || tr > 20000) errors.trialsToys = 'A whole number of toys from 0 to 20 000.';
        if (Object.keys(errors).length) return setLocal(errors);
        setLocal({});
        start.mutate(
          { version: version!, label: label.trim(), options: { dataset, limit: true, upcrossingToys: dataset === 'observed' ? up! : 0, trialsToys: dataset === 'observed' ? tr! : 0 } },
          { onSuccess: (scan) => onStarted?.(scan) },
        );
      }}
    >
      <FormError error={start.error} />
      <SelectField label="Model version" value={version ?? ''} onChange={(e) => setVersion(Number(e.target.value))} error={fieldError(local, start.error, 'version')}>
        {versions.map((v) => (
          <option key={v.number} value={v.number}>
            Version {v.number}
            {v.note ? ` – ${v.note}` : ''}
          </option>
        ))}
      </SelectField>
      <SelectField
        label="Data"
        value={dataset}
        onChange={(e) => setDataset(e.target.value as 'observed' | 'expected')}
        hint={blinded ? 'The analysis is blinded: only the expected scan may run until a convener approves unblinding.' : 'Observed: each hypothesis fitted to the data, with its global significance.'}
        error={fieldError(local, start.error, 'dataset')}
      >
        <option value="observed" disabled={blinded}>
          Observed data{blinded ? ' (after unblinding)' : ''}
        </option>
        <option value="expected">Expected only (Asimov, from the control regions)</option>
      </SelectField>
      {dataset === 'observed' && (
        <>
          <TextField
            label="Toys for the upcrossings"
            type="number"
            inputMode="numeric"
            min={0}
            max={2000}
            value={upcrossingToys}
            onChange={(e) => setUpcrossingToys(e.target.value)}
            hint="Background-only pseudo-experiments on which the upcrossings of the reference level are counted (0: the observed scan's count, with error √N)."
            error={fieldError(local, start.error, 'upcrossingToys')}
          />
          <TextField
            label="Toys for the trials factor"
            type="number"
            inputMode="numeric"
            min={0}
            max={20000}
            value={trialsToys}
            onChange={(e) => setTrialsToys(e.target.value)}
            hint="The global p-value counted directly: the fraction of background-only toys whose largest local q0 reaches the observed one. About 10/p toys to see p."
            error={fieldError(local, start.error, 'trialsToys')}
          />
        </>
      )}
      <TextField label="Label (optional)" value={label} maxLength={200} onChange={(e) => setLabel(e.target.value)} placeholder="e.g. expected, version 3" error={fieldError(local, start.error, 'label')} />
      <div>
        <Button type="submit" variant="primary" busy={start.isPending}>
          Run the scan
        </Button>
      </div>
    </form>
  );
}
