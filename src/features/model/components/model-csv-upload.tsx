import { useState } from 'react';
import type { ModelCsvKind, ModelUploadResult } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { UploadError } from '../../../components/ui/error-notice';
import { SelectField } from '../../../components/ui/field';
import { FileField, FormatReminder } from '../../../components/ui/file-field';
import { DataTable, dataColumns } from '../../../components/ui/data-table';
import { formatCount } from '../../../lib/format';
import { useUploadModelCsv } from '../api/upload-model-csv';

const FORMATS: Record<ModelCsvKind, { title: string; text: string; example: string }> = {
  templates: {
    title: 'Templates CSV',
    text: 'Header region,process,bin,nominal,variance. One row per bin, bins numbered from 1; nominal in events, variance (events², sum of squared weights) may be left empty.',
    example: `region,process,bin,nominal,variance
CR-shower,continuum,1,257.2476,2.57
CR-shower,continuum,2,165.61,1.66
…one row per bin…`,
  },
  observed: {
    title: 'Observed data CSV',
    text: 'Header region,bin,observed. One row per bin, bins numbered from 1; whole numbers of events.',
    example: `region,bin,observed
CR-shower,1,262
CR-shower,2,171
…one row per bin…`,
  },
};

type Change = ModelUploadResult['changes'][number];

const change = dataColumns<Change>();

/** What a file would set: per region (and process, for templates) its bins and total. */
function changeColumns(kind: ModelCsvKind) {
  return [
    change.accessor('region', { header: 'Region', meta: { cellClass: 'font-mono' } }),
    ...(kind === 'templates' ? [change.accessor('process', { header: 'Process', meta: { cellClass: 'font-mono' } })] : []),
    change.accessor('bins', { header: 'Bins', meta: { numeric: true } }),
    change.accessor('total', {
      header: 'Total',
      meta: { numeric: true, cellTitle: (c) => (c.total === null ? 'Signal-region data are not shown while the analysis is blinded' : 'Sum over the bins') },
      cell: (c) => {
        const total = c.getValue();
        return total === null ? <span className="text-amber-ink">withheld while blinded</span> : `${formatCount(Math.round(total * 10) / 10)} events`;
      },
    }),
  ];
}

/** Upload templates or observed data as CSV: preview what the file sets, then save. Nothing is written until Save. */
export function ModelCsvUpload({ slug }: { slug: string }) {
  const [kind, setKind] = useState<ModelCsvKind>('templates');
  const [file, setFile] = useState<File | null>(null);
  const [inputKey, setInputKey] = useState(0);
  const [preview, setPreview] = useState<ModelUploadResult | null>(null);
  const [saved, setSaved] = useState<string | null>(null);
  const upload = useUploadModelCsv(slug);
  const format = FORMATS[kind];

  const clear = () => {
    setPreview(null);
    upload.reset();
  };
  const done = (result: ModelUploadResult) => {
    setSaved(`Saved ${result.changes.length} ${kind === 'templates' ? 'template' : 'region'}${result.changes.length === 1 ? '' : 's'} from ${file?.name}.`);
    setPreview(null);
    setFile(null);
    setInputKey((k) => k + 1);
  };

  return (
    <div className="flex flex-col gap-3">
      <div className="grid gap-4 lg:grid-cols-2">
        <div className="flex flex-col gap-3">
          <SelectField
            label="The file holds"
            value={kind}
            onChange={(e) => {
              setKind(e.target.value as ModelCsvKind);
              clear();
            }}
            className="max-w-xs"
          >
            <option value="templates">Nominal templates and variances</option>
            <option value="observed">Observed data</option>
          </SelectField>
          <FileField
            label="CSV file"
            accept=".csv,text/csv"
            file={file}
            inputKey={inputKey}
            onFile={(f) => {
              setFile(f);
              setSaved(null);
              clear();
            }}
          />
          <div className="flex gap-2">
            <Button variant="primary" disabled={!file} busy={upload.isPending && !upload.variables?.save} onClick={() => file && upload.mutate({ kind, file, save: false }, { onSuccess: setPreview })}>
              Preview
            </Button>
            {preview && (
              <>
                <Button variant="primary" busy={upload.isPending && upload.variables?.save} onClick={() => file && upload.mutate({ kind, file, save: true }, { onSuccess: done })}>
                  Save
                </Button>
                <Button
                  variant="ghost"
                  onClick={() => {
                    clear();
                    setFile(null);
                    setInputKey((k) => k + 1);
                  }}
                >
                  Cancel
                </Button>
              </>
            )}
          </div>
        </div>
        <FormatReminder title={format.title} example={format.example}>
          <p>{format.text}</p>
        </FormatReminder>
      </div>
      <UploadError error={upload.error} />
      {saved && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {saved}
        </p>
      )}
      {preview && (
        <section aria-label="Preview of the CSV upload" className="rounded-lg border-2 border-dashed border-teal/50 bg-teal-soft/20 px-3 py-2">
          <h3 className="mb-2 text-sm font-semibold">Preview: the file would set these; nothing is saved until you press Save</h3>
          <DataTable
            columns={changeColumns(kind)}
            data={preview.changes}
            getRowId={(c) => `${c.region}|${c.process ?? ''}`}
            label="What the file sets"
            frame="plain"
          />
        </section>
      )}
    </div>
  );
}
