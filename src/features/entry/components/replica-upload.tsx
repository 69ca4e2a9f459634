import { useState } from 'react';
import { Link } from 'react-router';
import { replicaOptionsSchema, type ReplicaPreview } from '@shared/schemas/register';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { UploadError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { FileField, FormatReminder } from '../../../components/ui/file-field';
import { SegmentedField } from '../../../components/ui/segmented-field';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { useUploadReplicas } from '../api/upload-replicas';
import { EffectCard, type RegionInfo } from './effect-card';
import { VariationLegend } from './variation-chart';

type Method = 'envelope' | 'spread' | 'components';

const CSV_EXAMPLE = `region,process,template,bin,yield
CR-shower,continuum,scale_up,1,250.1
CR-shower,continuum,scale_up,2,162.0
…every bin of every template…
CR-shower,continuum,scale_down,8,11.9`;

const JSON_EXAMPLE = `{"region":"CR-shower","process":"continuum",
 "templates":[{"name":"alt1","yields":[250.1,162.0,…]},
              {"name":"alt2","yields":[…]}]}`;

const METHODS: { value: Method; label: string; title: string }[] = [
  { value: 'envelope', label: 'Envelope', title: 'Up and down are the largest and the smallest of the nominal and the alternatives in each bin' },
  { value: 'spread', label: 'Spread', title: 'The nominal ± the standard deviation of the templates (divisor N − 1)' },
  { value: 'components', label: 'Principal components', title: 'The leading principal components of the templates’ covariance, each nominal ± √λ e; the second and later become entries of their own' },
];

const METHOD_WORDS: Record<Method, string> = {
  envelope: 'the envelope of the alternatives',
  spread: 'the nominal ± the standard deviation of the alternatives',
  components: 'the principal components of the alternatives',
};

const pct = (v: number) => `${(v * 100).toFixed(1)} %`;

/**
 * One systematic from alternative templates of one (region, process): choose a file and how the
 * templates become up and down (their envelope, their spread, or their principal components up to
 * a kept share of the variance), preview every effect that would be written and on which entry,
 * then save. Nothing is written until Save.
 */
export function ReplicaUpload({ slug, entryKey, regions, processLabels, onSaved }: { slug: string; entryKey: string; regions: Map<string, RegionInfo>; processLabels: Map<string, string>; onSaved?: () => void }) {
  const [file, setFile] = useState<File | null>(null);
  const [inputKey, setInputKey] = useState(0);
  const [method, setMethod] = useState<Method>('envelope');
  const [keepPct, setKeepPct] = useState('95');
  const [local, setLocal] = useState<FieldErrors>({});
  const [preview, setPreview] = useState<ReplicaPreview | null>(null);
  const [saved, setSaved] = useState<ReplicaPreview | null>(null);
  const upload = useUploadReplicas(slug, entryKey);

  const reset = () => {
    setPreview(null);
    setLocal({});
    upload.reset();
  };
  const options = () => {
    const raw = method === 'components' ? { method, keep: Number(keepPct) / 100 } : { method };
    const checked = checkWith(replicaOptionsSchema, raw);
    if (!checked.ok) {
      setLocal(checked.errors);
      return null;
    }
    return raw;
  };
  const send = (save: boolean) => {
    const o = options();
    if (!file || !o) return;
    setSaved(null);
    upload.mutate(
      { file, options: o, save },
      {
        onSuccess: (result) => {
          if (!result.saved) return setPreview(result);
          setSaved(result);
          setPreview(null);
          setFile(null);
          setInputKey((k) => k + 1);
          onSaved?.();
        },
      },
    );
  };
  const cancel = () => {
    reset();
    setFile(null);
    setInputKey((k) => k + 1);
  };
  const created = saved?.effects.filter((e) => e.created) ?? [];
  const keepError = local.keep ? 'must be above 0 % and at most 100 %' : fieldError({}, upload.error, 'keep');

  return (
    <div className="flex flex-col gap-4">
      <div className="grid gap-4 lg:grid-cols-[1fr_1fr]">
        <div className="flex flex-col gap-3">
          <FileField
            label="Alternative templates (CSV or JSON)"
            accept=".csv,.json,text/csv,application/json"
            file={file}
            onFile={(f) => {
              setFile(f);
              setSaved(null);
              reset();
            }}
            inputKey={inputKey}
          />
          <SegmentedField<Method>
            legend="How the templates become up and down"
            value={method}
            onChange={(m) => {
              setMethod(m);
              reset();
            }}
            options={METHODS}
            hint={
              method === 'envelope'
                ? 'Per bin, the largest and the smallest of the nominal and the alternatives: up ≥ nominal ≥ down everywhere.'
                : method === 'spread'
                  ? 'Per bin, the nominal ± the standard deviation of the templates.'
                  : 'The leading components of the templates’ covariance until they hold the kept share of its variance; the first is this entry’s effect, each further one an entry of its own.'
            }
          />
          {method === 'components' && (
            <TextField
              label="Keep components up to this share of the variance (%)"
              type="number"
              min={1}
              max={100}
              step={1}
              value={keepPct}
              onChange={(e) => {
                setKeepPct(e.target.value);
                reset();
              }}
              error={keepError}
              hint="95 % keeps the leading components until they hold 95 % of the trace of the covariance."
              className="max-w-xs"
            />
          )}
          <div className="flex flex-wrap gap-2">
            <Button variant="primary" onClick={() => send(false)} disabled={!file} busy={upload.isPending && !upload.variables?.save} aria-label="Preview the alternative templates">
              Preview
            </Button>
            {preview && (
              <>
                <Button variant="primary" onClick={() => send(true)} busy={upload.isPending && upload.variables?.save}>
                  Save {preview.effects.length} effect{preview.effects.length === 1 ? '' : 's'}
                </Button>
                <Button variant="ghost" onClick={cancel} aria-label="Cancel the alternative templates">
                  Cancel
                </Button>
              </>
            )}
          </div>
        </div>
        <div className="flex flex-col gap-2">
          <FormatReminder title="CSV columns" example={CSV_EXAMPLE}>
            <p>
              Header <code>region,process,template,bin,yield</code>: one row per template and bin, bins numbered from 1, every template giving every bin of one region and process once, in events.
              At least two templates.
            </p>
          </FormatReminder>
          <FormatReminder title="JSON form" example={JSON_EXAMPLE}>
            <p>
              One region and process with a list of named templates. Full description: docs/uploads.md, “One systematic from alternative templates”.
            </p>
          </FormatReminder>
        </div>
      </div>

      <UploadError error={upload.error} />
      {saved && (
        <div role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          <p>
            Saved {METHOD_WORDS[saved.method]} in {saved.filename} on {saved.region} × {saved.process}: {saved.effects.length === 1 ? 'the shape effect of this entry' : `this entry’s shape effect and ${saved.effects.length - 1} more`}, as a new
            revision.
          </p>
          {created.length > 0 && (
            <p>
              New draft entr{created.length === 1 ? 'y' : 'ies'}, with this entry’s owner and group:{' '}
              {created.map((e, i) => (
                <span key={e.entry}>
                  {i > 0 && ', '}
                  <Link to={`/a/${slug}/entries/${encodeURIComponent(e.entry)}`} className="font-mono font-medium underline">
                    {e.entry}
                  </Link>
                </span>
              ))}
              .
            </p>
          )}
        </div>
      )}

      {preview && (
        <section aria-label="Preview of the alternative templates" className="flex flex-col gap-3 rounded-lg border-2 border-dashed border-teal/50 bg-teal-soft/20 px-4 py-3">
          <div className="flex flex-wrap items-baseline justify-between gap-2">
            <h3 className="text-sm font-semibold">Preview: nothing is saved until you press Save</h3>
            <p className="text-xs text-ink-muted">
              {preview.filename} · <span title={`SHA-256 of the file: ${preview.sha256}`} className="font-mono">SHA-256 {preview.sha256.slice(0, 12)}…</span>
            </p>
          </div>
          <p className="text-sm">
            {METHOD_WORDS[preview.method][0].toUpperCase() + METHOD_WORDS[preview.method].slice(1)}: {preview.templates.length} templates of <span className="font-mono">{preview.region}</span> ×{' '}
            <span className="font-mono">{preview.process}</span> ({preview.templates.join(', ')}).
            {preview.kept !== null && (
              <>
                {' '}
                {preview.effects.length} component{preview.effects.length === 1 ? '' : 's'} kept, holding <strong>{pct(preview.kept)}</strong> of the variance.
              </>
            )}
          </p>
          <VariationLegend />
          <div className="grid gap-3 md:grid-cols-2 xl:grid-cols-3">
            {preview.effects.map((e, j) => (
              <EffectCard
                key={e.entry}
                name={`Effect on ${preview.region} × ${preview.process} for ${e.entry}`}
                region={preview.region}
                process={preview.process}
                v={{ kind: 'shape', up: e.up, down: e.down, nominal: preview.nominal, edges: preview.edges }}
                warnings={e.warnings}
                regionInfo={regions.get(preview.region)}
                processLabel={processLabels.get(preview.process)}
                badges={
                  <>
                    <Badge tone={e.created ? 'plum' : 'neutral'} title={e.created ? 'Saving creates this entry, a draft with this entry’s owner and group' : e.entry === entryKey ? 'The shape effect of this entry' : 'An entry that exists already: its shape effect on this template is replaced'}>
                      {e.entry === entryKey ? 'this entry' : e.created ? `new entry ${e.entry}` : `entry ${e.entry}`}
                    </Badge>
                    {e.fraction !== null && (
                      <Badge tone="teal" title={`Component ${j + 1} holds this share of the variance of the alternative templates`}>
                        component {j + 1}: {pct(e.fraction)} of the variance
                      </Badge>
                    )}
                  </>
                }
              />
            ))}
          </div>
        </section>
      )}
    </div>
  );
}
