import { useState } from 'react';
import type { Model } from '@shared/schemas/api';
import { EmptyState } from '../../../components/ui/empty-state';
import { Panel } from '../../../components/ui/page';
import { ImportModel } from './exchange-actions';
import { FloatingNormsPanel } from './floating-norms-panel';
import { ModelCsvUpload } from './model-csv-upload';
import { ParametersOfInterestPanel } from './parameters-of-interest-panel';
import { useEditor } from './model-editor';
import { PrefitPanel } from './prefit-panel';
import { ProcessesPanel } from './processes-panel';
import { RegionsPanel } from './regions-panel';
import { SignalHypothesesPanel } from './signal-hypotheses-panel';
import { TemplatesPanel } from './templates-panel';

/** The model screen: its panels share one open editor, so opening one closes any other. */
export function ModelView({ slug, model, canEdit }: { slug: string; model: Model; canEdit: boolean }) {
  const editor = useEditor();
  const [imported, setImported] = useState<string | null>(null);
  const isEmpty = model.regions.length === 0 && model.processes.length === 0;

  if (isEmpty && !canEdit)
    return (
      <EmptyState title="The model is empty">
        <p>Regions with their binning, the processes and their nominal templates will be listed here once an analyst defines them.</p>
      </EmptyState>
    );

  return (
    <div className="flex flex-col gap-5">
      {isEmpty && canEdit && (
        <Panel title="Start the model">
          <ImportModel slug={slug} onImported={setImported} />
          <p className="mt-3 border-t border-rule pt-3 text-sm text-ink-soft">Or build it by hand: add regions and processes below, then their templates.</p>
        </Panel>
      )}

      {imported && !isEmpty && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          {imported}
        </p>
      )}

      {model.regions.length > 0 && model.templates.length > 0 && <PrefitPanel model={model} />}
      <RegionsPanel slug={slug} model={model} canEdit={canEdit} editor={editor} />
      <ProcessesPanel slug={slug} model={model} canEdit={canEdit} editor={editor} />
      {(model.floatingNorms.length > 0 || canEdit) && <FloatingNormsPanel slug={slug} model={model} canEdit={canEdit} editor={editor} />}
      {model.parametersOfInterest.length > 0 && <ParametersOfInterestPanel model={model} />}
      {model.regions.length > 0 && model.processes.length > 0 && <TemplatesPanel slug={slug} model={model} canEdit={canEdit} editor={editor} />}
      {model.templates.some((t) => model.processes.find((p) => p.key === t.process)?.kind === 'signal') && <SignalHypothesesPanel slug={slug} canEdit={canEdit} editor={editor} />}

      {canEdit && model.regions.length > 0 && (
        <Panel title="Upload templates or observed data (CSV)">
          <ModelCsvUpload slug={slug} />
        </Panel>
      )}
    </div>
  );
}
