import { useState } from 'react';
import { Button, buttonClass } from '../../../components/ui/button';
import { UploadError } from '../../../components/ui/error-notice';
import { FileField } from '../../../components/ui/file-field';
import { exchangeDownloadUrl, useImportExchange, type ImportResult } from '../api/import-exchange';

/** What an import created, in words. */
const importCounts = (r: ImportResult) => {
  const parts = [`${r.regions} regions`, `${r.processes} processes`, `${r.entries} register entries`];
  if (r.parametersOfInterest) parts.push(`${r.parametersOfInterest} parameter${r.parametersOfInterest === 1 ? '' : 's'} of interest besides μ`);
  if (r.hypotheses) parts.push(`${r.hypotheses} signal hypotheses`);
  return `${parts.slice(0, -1).join(', ')} and ${parts.at(-1)}`;
};

/** Download the whole model as one exchange file (JSON). */
export function ExportModelLink({ slug }: { slug: string }) {
  return (
    <a href={exchangeDownloadUrl(slug)} download={`${slug}.model.json`} className={buttonClass('secondary')} title="The whole model as one exchange file; blinded signal-region data are left out">
      Export model (JSON)
    </a>
  );
}

/** Import an exchange file into an analysis that has no model yet. */
export function ImportModel({ slug, onImported }: { slug: string; onImported?: (summary: string) => void }) {
  const [file, setFile] = useState<File | null>(null);
  const imp = useImportExchange(slug);
  return (
    <div className="flex flex-col gap-3">
      <p className="text-sm text-ink-soft">
        Start from an exchange file: regions with their binning and data, processes, templates, floating normalisations, parameters of interest, the systematics with their effects and groups, and the signal hypotheses. See{' '}
        <span className="font-medium">docs/exchange-file.md</span> for its format.
      </p>
      <div className="flex flex-wrap items-end gap-3">
        <FileField label="Model file (JSON)" accept=".json,application/json" file={file} onFile={(f) => { setFile(f); imp.reset(); }} />
        <Button
          variant="primary"
          disabled={!file}
          busy={imp.isPending}
          onClick={() => file && imp.mutate(file, { onSuccess: (r) => onImported?.(`Imported ${file.name}: ${importCounts(r)}.`) })}
        >
          Import model file
        </Button>
      </div>
      <UploadError error={imp.error} />
      {imp.data && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          Imported {importCounts(imp.data)}.
        </p>
      )}
    </div>
  );
}
