import { useState, type FormEvent } from 'react';
import { plotLabelsSchema, type PlotLabels } from '@shared/schemas/api';
import { PlotLabel, plotLabelText } from '../../../components/charts/plot-label';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextField } from '../../../components/ui/field';
import { Panel } from '../../../components/ui/page';
import { checkWith, fieldError, type FieldErrors } from '../../../lib/form-issues';
import { useSetPlotLabels } from '../api/set-plot-labels';

const FIELDS: { key: keyof PlotLabels; label: string; hint: string }[] = [
  { key: 'experiment', label: 'Experiment', hint: 'e.g. LANTERN' },
  { key: 'status', label: 'Status', hint: 'e.g. Internal, Preliminary' },
  { key: 'luminosity', label: 'Integrated luminosity', hint: 'as it should read, e.g. 38 fb⁻¹' },
  { key: 'energy', label: 'Centre-of-mass energy', hint: 'e.g. 9 TeV' },
];

/** The labels on every chart of the analysis, on screen and in the approval pack; conveners edit them. */
export function PlotLabelsPanel({ slug, labels, mayEdit }: { slug: string; labels: PlotLabels; mayEdit: boolean }) {
  const [draft, setDraft] = useState<PlotLabels>(labels);
  const [local, setLocal] = useState<FieldErrors>({});
  const [saved, setSaved] = useState(false);
  const save = useSetPlotLabels(slug);
  const text = plotLabelText(labels);

  function submit(e: FormEvent) {
    e.preventDefault();
    setSaved(false);
    const checked = checkWith(plotLabelsSchema, draft);
    if (!checked.ok) return setLocal(checked.errors);
    setLocal({});
    save.mutate(checked.data, { onSuccess: () => setSaved(true) });
  }

  return (
    <Panel title="Plot labels" className="mt-4">
      <p className="text-sm text-ink-soft">Every chart of this analysis carries them, on screen, in downloaded SVG and PNG files and in the approval pack.</p>
      <svg viewBox="0 0 420 22" className="my-2 h-6 w-full max-w-md rounded border border-rule bg-paper-raised" role="img" aria-label={`Plot labels as charts show them: ${text || 'none set'}`}>
        {text ? <PlotLabel x={8} y={15} labels={labels} fontSize={12} /> : <text x={8} y={15} fontSize={11} fill="currentColor">No labels set</text>}
      </svg>
      {!mayEdit && <p className="text-xs text-ink-muted">A convener sets them.</p>}
      {mayEdit && (
        <form onSubmit={submit} aria-label="Plot labels" className="flex flex-col gap-3" noValidate>
          {save.error && <FormError error={save.error} />}
          <div className="grid grid-cols-1 gap-3 sm:grid-cols-2 xl:grid-cols-4">
            {FIELDS.map((f) => (
              <TextField
                key={f.key}
                label={f.label}
                name={f.key}
                value={draft[f.key]}
                maxLength={60}
                hint={f.hint}
                error={fieldError(local, save.error, f.key)}
                onChange={(e) => {
                  setSaved(false);
                  setDraft({ ...draft, [f.key]: e.target.value });
                }}
              />
            ))}
          </div>
          <div className="flex items-center gap-3">
            <Button type="submit" variant="primary" busy={save.isPending}>
              Save plot labels
            </Button>
            {saved && (
              <span role="status" className="text-sm text-teal-ink">
                Saved: every chart now carries them.
              </span>
            )}
          </div>
        </form>
      )}
    </Panel>
  );
}
