import { useState } from 'react';
import type { VariationOptions, VariationPreview } from '@shared/schemas/register';
import { Badge } from '../../../components/ui/badge';
import { Button } from '../../../components/ui/button';
import { UploadError } from '../../../components/ui/error-notice';
import { CheckboxField } from '../../../components/ui/field';
import { FileField, FormatReminder } from '../../../components/ui/file-field';
import { useUploadVariations } from '../api/upload-variations';
import { EffectCard, type RegionInfo } from './effect-card';
import { VariationLegend } from './variation-chart';

const CSV_EXAMPLE = `region,process,kind,bin,up,down
CR-shower,showerpair,scale,,1.045,0.962
CR-shower,continuum,shape,1,249.53,264.97
CR-shower,continuum,shape,2,161.94,169.03
…one row per bin…
CR-shower,continuum,shape,8,12.08,11.37`;

const JSON_EXAMPLE = `{"effects":[
  {"region":"CR-shower","process":"showerpair","kind":"scale","up":1.045,"down":0.962},
  {"region":"CR-shower","process":"continuum","kind":"shape","up":[249.53,161.94,…,12.08]}
]}`;

const NO_OPTIONS: Required<VariationOptions> = { mirror: false, symmetrise: false, flatToScale: false };

/**
 * Upload variations for an entry: choose a file and the options, preview what would be saved
 * (each effect's chart, its warnings, what the options changed, what it replaces), then save.
 * Nothing is written until Save.
 */
export function VariationUpload({ slug, entryKey, regions, processLabels, onSaved }: { slug: string; entryKey: string; regions: Map<string, RegionInfo>; processLabels: Map<string, string>; onSaved?: () => void }) {
  const [file, setFile] = useState<File | null>(null);
  const [inputKey, setInputKey] = useState(0);
  const [options, setOptions] = useState(NO_OPTIONS);
  const [preview, setPreview] = useState<VariationPreview | null>(null);
  const [saved, setSaved] = useState<string | null>(null);
  const upload = useUploadVariations(slug, entryKey);

  const reset = () => {
    setPreview(null);
    upload.reset();
  };
  const chooseFile = (f: File | null) => {
    setFile(f);
    setSaved(null);
    reset();
  };
  const setOption = (name: keyof VariationOptions) => (e: { target: { checked: boolean } }) => {
    setOptions((o) => ({ ...o, [name]: e.target.checked }));
    reset();
  };

  const runPreview = () => {
    if (!file) return;
    setSaved(null);
    upload.mutate({ file, options, save: false }, { onSuccess: setPreview });
  };
  const save = () => {
    if (!file) return;
    upload.mutate(
      { file, options, save: true },
      {
        onSuccess: (result) => {
          setSaved(`Saved ${result.effects.length} effect${result.effects.length === 1 ? '' : 's'} from ${result.filename} as a new revision of this entry.`);
          setPreview(null);
          setFile(null);
          setInputKey((k) => k + 1);
          onSaved?.();
        },
      },
    );
  };
  const cancel = () => {
    setPreview(null);
    setFile(null);
    setInputKey((k) => k + 1);
    upload.reset();
  };

  return (
    <div className="flex flex-col gap-4">
      <div className="grid gap-4 lg:grid-cols-[1fr_1fr]">
        <div className="flex flex-col gap-3">
          <FileField label="Variation file (CSV or JSON)" accept=".csv,.json,text/csv,application/json" file={file} onFile={chooseFile} inputKey={inputKey} />
          <fieldset className="flex flex-col gap-2">
            <legend className="mb-1 text-xs font-semibold text-ink-soft">Options</legend>
            <CheckboxField label="Mirror one-sided variations" checked={options.mirror} onChange={setOption('mirror')} hint="Where no down is given, derive it from up: a template as its mirror image about the nominal, a ratio κ as 1/κ." />
            <CheckboxField
              label="Symmetrise two-sided variations"
              checked={options.symmetrise}
              onChange={setOption('symmetrise')}
              hint="Replace up and down by the nominal ± half their difference (ratios: symmetric in log)."
            />
            <CheckboxField label="Store flat shape effects as scale effects" checked={options.flatToScale} onChange={setOption('flatToScale')} hint="A shape effect with the same ratio in every bin becomes one ratio for up and one for down." />
          </fieldset>
          <div className="flex flex-wrap gap-2">
            <Button variant="primary" onClick={runPreview} disabled={!file} busy={upload.isPending && !upload.variables?.save}>
              Preview
            </Button>
            {preview && (
              <>
                <Button variant="primary" onClick={save} busy={upload.isPending && upload.variables?.save}>
                  Save {preview.effects.length} effect{preview.effects.length === 1 ? '' : 's'}
                </Button>
                <Button variant="ghost" onClick={cancel}>
                  Cancel
                </Button>
              </>
            )}
          </div>
        </div>
        <div className="flex flex-col gap-2">
          <FormatReminder title="CSV columns" example={CSV_EXAMPLE}>
            <p>
              Header <code>region,process,kind,bin,up,down</code>. A <strong>scale</strong> row leaves <code>bin</code> empty and gives ratios to the nominal (1.04 means +4 %). A{' '}
              <strong>shape</strong> effect gives one row per bin, bins numbered from 1, with up and down yields in events. Leave <code>down</code> empty in every row of a template for a
              one-sided variation, and tick “Mirror”.
            </p>
          </FormatReminder>
          <FormatReminder title="JSON form" example={JSON_EXAMPLE}>
            <p>An object with an <code>effects</code> list, each effect as in the exchange file; <code>down</code> may be left out for a one-sided variation. Full description and example files: docs/uploads.md.</p>
          </FormatReminder>
        </div>
      </div>

      <UploadError error={upload.error} />
      {saved && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {saved}
        </p>
      )}

      {preview && (
        <section aria-label="Preview of the upload" className="flex flex-col gap-3 rounded-lg border-2 border-dashed border-teal/50 bg-teal-soft/20 px-4 py-3">
          <div className="flex flex-wrap items-baseline justify-between gap-2">
            <h3 className="text-sm font-semibold">Preview: nothing is saved until you press Save</h3>
            <p className="text-xs text-ink-muted">
              {preview.filename} · <span title={`SHA-256 of the file: ${preview.sha256}`} className="font-mono">SHA-256 {preview.sha256.slice(0, 12)}…</span>
            </p>
          </div>
          <VariationLegend errors />
          <div className="grid gap-3 md:grid-cols-2 xl:grid-cols-3">
            {preview.effects.map((e) => (
              <EffectCard
                key={`${e.region}|${e.process}|${e.kind}`}
                region={e.region}
                process={e.process}
                v={e}
                warnings={e.warnings}
                regionInfo={regions.get(e.region)}
                processLabel={processLabels.get(e.process)}
                badges={
                  <>
                    {e.replaces && (
                      <Badge tone="plum" title="This entry already has an effect of this kind on this region and process; saving replaces it">
                        replaces existing
                      </Badge>
                    )}
                    {e.transformed.map((t) => (
                      <Badge key={t} tone="ink" title="Changed by the options you chose">
                        {t}
                      </Badge>
                    ))}
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
