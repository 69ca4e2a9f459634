import { useState } from 'react';
import { hypothesisFieldsSchema, type HypothesisUploadResult } from '@shared/schemas/signal-hypotheses';
import { Button } from '../../../components/ui/button';
import { UploadError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { FileField, FormatReminder } from '../../../components/ui/file-field';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { checkWith, fieldError, issueAt, type FieldErrors } from '../../../lib/form-issues';
import { formatYield } from '../../../lib/format';
import { useUploadSignalHypothesis } from '../api/upload-signal-hypothesis';

const TEMPLATES_EXAMPLE = `region,process,bin,nominal,variance
SR-core,vireon,1,0,0
SR-core,vireon,9,1.9943,0.008124
SR-core,vireon,10,18.3681,0.077651
…one row per bin of each template…`;
const EFFECTS_EXAMPLE = `[{ "systematic": "flare_escale",
   "region": "SR-core",
   "process": "vireon",
   "kind": "shape",
   "up": [...], "down": [...] },
 …]`;

type Template = HypothesisUploadResult['hypothesis']['templates'][number];
const col = dataColumns<Template>();
const templateColumns = [
  col.accessor('region', { header: 'Region', meta: { cellClass: 'font-mono text-xs' } }),
  col.accessor('process', { header: 'Process', meta: { cellClass: 'font-mono text-xs' } }),
  col.accessor('bins', { header: 'Bins', meta: { numeric: true } }),
  col.accessor('total', { header: 'Signal yield', meta: { numeric: true, cellTitle: 'Summed over the bins, at μ = 1' }, cell: (c) => `${formatYield(c.getValue())} events` }),
];

/** What an upload would add or replace: its templates, yield and effects. */
function HypothesisPreview({ preview, parameter }: { preview: HypothesisUploadResult; parameter: { name: string; unit: string } }) {
  const h = preview.hypothesis;
  return (
    <section aria-label="Preview of the signal hypothesis" className="rounded-lg border-2 border-dashed border-teal/50 bg-teal-soft/20 px-3 py-2">
      <h3 className="mb-1 text-sm font-semibold">
        Preview: {preview.replaced ? 'replaces' : 'adds'} {h.label || h.key} ({parameter.name} = {h.value}
        {parameter.unit ? ` ${parameter.unit}` : ''}); nothing is saved until you press Save
      </h3>
      <p className="mb-2 text-xs text-ink-soft">
        {formatYield(h.total)} signal events in all; {h.effects.shape} shape and {h.effects.scale} scale effect{h.effects.scale === 1 ? '' : 's'}.
      </p>
      <DataTable columns={templateColumns} data={h.templates} getRowId={(t) => `${t.region}|${t.process}`} label="Templates the hypothesis replaces" frame="plain" />
    </section>
  );
}

/**
 * Add a signal hypothesis, or replace the one of the same key: its key, label and value, its
 * templates as CSV and its effects as JSON. Previewed first; nothing is written until Save.
 */
export function HypothesisForm({ slug, parameter, onDone }: { slug: string; parameter: { name: string; unit: string }; onDone: () => void }) {
  const [key, setKey] = useState('');
  const [label, setLabel] = useState('');
  const [value, setValue] = useState('');
  const [file, setFile] = useState<File | null>(null);
  const [effectsFile, setEffectsFile] = useState<File | null>(null);
  const [local, setLocal] = useState<FieldErrors>({});
  const [preview, setPreview] = useState<HypothesisUploadResult | null>(null);
  const upload = useUploadSignalHypothesis(slug);
  const valueLabel = `${parameter.name.charAt(0).toUpperCase()}${parameter.name.slice(1)}${parameter.unit ? ` (${parameter.unit})` : ''}`;

  /** Sets a field: a preview or a refusal of the former input no longer holds. */
  const change =
    <T,>(set: (v: T) => void) =>
    (v: T) => {
      set(v);
      setPreview(null);
      upload.reset();
    };
  async function send(save: boolean) {
    const checked = checkWith(hypothesisFieldsSchema, { key: key.trim(), label, value });
    const errors: FieldErrors = checked.ok ? {} : checked.errors;
    if (!file) errors.file = 'Choose the CSV file of its templates';
    setLocal(errors);
    if (!checked.ok || !file) return;
    const effects = effectsFile ? await effectsFile.text() : null;
    upload.mutate({ key: key.trim(), label: label.trim(), value: value.trim(), file, effects, save }, { onSuccess: save ? onDone : setPreview });
  }

  const err = (f: string) => fieldError(local, upload.error, f);
  const effectsError = issueAt(upload.error, ['effects']);
  return (
    <form
      aria-label="Add a signal hypothesis"
      className="flex flex-col gap-3"
      noValidate
      onSubmit={(e) => {
        e.preventDefault();
        void send(false);
      }}
    >
      <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_minmax(0,22rem)]">
        <div className="flex flex-col gap-3">
          <div className="grid gap-3 sm:grid-cols-3">
            <TextField label="Key" value={key} onChange={(e) => change(setKey)(e.target.value)} error={err('key')} hint="e.g. m1250; an existing key is replaced" required />
            <TextField label="Label" value={label} onChange={(e) => change(setLabel)(e.target.value)} error={err('label')} hint={`e.g. ${parameter.name} = 1250${parameter.unit ? ` ${parameter.unit}` : ''}`} />
            <TextField label={valueLabel} inputMode="decimal" value={value} onChange={(e) => change(setValue)(e.target.value)} error={err('value')} hint="The value of this hypothesis" required />
          </div>
          <div className="grid gap-3 sm:grid-cols-2">
            <FileField label="Templates (CSV)" accept=".csv,text/csv" file={file} onFile={change(setFile)} error={err('file')} hint="The signal templates it replaces" />
            <FileField label="Effects (JSON, optional)" accept=".json,application/json" file={effectsFile} onFile={change(setEffectsFile)} error={effectsError} hint="Needed where the model varies a replaced template's shape" />
          </div>
          <div className="flex gap-2">
            <Button type="submit" variant="primary" busy={upload.isPending && !upload.variables?.save}>
              Preview
            </Button>
            {preview && (
              <Button variant="primary" busy={upload.isPending && upload.variables?.save} onClick={() => void send(true)}>
                {preview.replaced ? 'Save, replacing it' : 'Save hypothesis'}
              </Button>
            )}
            <Button variant="ghost" onClick={onDone}>
              Cancel
            </Button>
          </div>
        </div>
        <div className="flex flex-col gap-2">
          <FormatReminder title="Templates CSV" example={TEMPLATES_EXAMPLE}>
            <p>Header region,process,bin,nominal,variance: the templates file&apos;s columns. One row per bin of each (region, signal process) it replaces, bins from 1; variance may be left out.</p>
          </FormatReminder>
          <FormatReminder title="Effects JSON" example={EFFECTS_EXAMPLE}>
            <p>The exchange file&apos;s effects, each with its systematic. A shape effect is required wherever the model varies a replaced template by shape; a scale effect replaces the model&apos;s of that systematic.</p>
          </FormatReminder>
        </div>
      </div>
      <UploadError error={upload.error} />
      {preview && <HypothesisPreview preview={preview} parameter={parameter} />}
    </form>
  );
}
