import { useSearchParams } from 'react-router';
import type { FitResultHead } from '@shared/schemas/fits';
import { ErrorNotice } from '../../../../components/ui/error-notice';
import { SelectField } from '../../../../components/ui/field';
import { Loading } from '../../../../components/ui/loading';
import { Panel } from '../../../../components/ui/page';
import { useCan } from '../../../../features/analyses/use-can';
import { useDiagnosis } from '../../../../features/diagnosis/api/get-diagnosis';
import { DiagnosisPanel, type DiagnosisPanelProps } from '../../../../features/diagnosis/components/diagnosis-panel';
import { useFitPart } from '../../../../features/fits/api/get-fit-part';
import { ConvergenceReport } from '../../../../features/fits/components/convergence';
import { labelsOf } from '../../../../features/fits/result-helpers';
import { useModel } from '../../../../features/model/api/get-model';
import { EntryQuestions } from '../../../../features/questions/components/entry-questions';
import { RaiseQuestionForm } from '../../../../features/questions/components/raise-question-form';

/** A parameter's diagnosis with the questions on its register entry, and for those who may, a new question raised from it. */
export function DiagnosisWithQuestions({ mayRaise, ...panel }: Omit<DiagnosisPanelProps, 'questions'> & { mayRaise: boolean }) {
  const { slug } = panel;
  const entry = panel.diagnosis.parameter.entry;
  return (
    <DiagnosisPanel
      {...panel}
      questions={
        entry
          ? {
              list: <EntryQuestions slug={slug} entry={entry.key} />,
              raise: mayRaise ? (f) => <RaiseQuestionForm slug={slug} entry={f.entry} fit={f.fit} defaultTitle={f.defaultTitle} onCancel={f.close} /> : undefined,
            }
          : undefined
      }
    />
  );
}

/** One parameter's diagnosis, fetched when chosen; the first look refits along its scan. */
function ParameterDiagnosis({ slug, fitId, result, name }: { slug: string; fitId: number; result: FitResultHead; name: string }) {
  const diagnosis = useDiagnosis(slug, fitId, name);
  const yields = useFitPart(slug, fitId, 'yields');
  const model = useModel(slug);
  const can = useCan(slug);
  const mayRaise = can('question.raise');
  if (diagnosis.isPending)
    return (
      <div className="rounded-lg border border-rule bg-paper-raised px-4 py-3">
        <Loading label={`Diagnosing ${name}…`} />
        <p className="mt-1 text-xs text-ink-muted">
          The first diagnosis of a parameter refits the model at every point of its likelihood scan, which can take a few seconds on a large model. It is kept
          afterwards.
        </p>
      </div>
    );
  if (diagnosis.isError) return <ErrorNotice error={diagnosis.error} onRetry={() => void diagnosis.refetch()} />;
  return <DiagnosisWithQuestions slug={slug} diagnosis={diagnosis.data} result={result} yields={yields.data ?? null} model={model.data} mayRaise={mayRaise} mayRun={can('fit.run')} />;
}

/** The diagnosis view: one parameter (chosen here or from any result table) and the convergence report in full. */
export function DiagnosticsTab({ slug, fitId, result }: { slug: string; fitId: number; result: FitResultHead }) {
  const [params, setParams] = useSearchParams();
  const name = params.get('parameter');
  const labels = labelsOf(result);
  const choices = result.nuisance.map((n) => n.name).sort((a, b) => a.localeCompare(b));
  const held = new Set(result.nuisance.filter((n) => n.fixed).map((n) => n.name));
  return (
    <div className="flex flex-col gap-4">
      <SelectField
        label="Parameter"
        value={name ?? ''}
        onChange={(e) => setParams(e.target.value ? { parameter: e.target.value } : {}, { replace: true })}
        className="max-w-md"
        hint={name ? undefined : 'Or click a parameter in the impact ranking, the pulls or the correlations.'}
      >
        <option value="">Choose a nuisance parameter…</option>
        {choices.map((c) => (
          <option key={c} value={c} disabled={held.has(c)}>
            {c}
            {labels.get(c) && labels.get(c) !== c ? ` (${labels.get(c)})` : ''}
            {held.has(c) ? ' — held, nothing to diagnose' : ''}
          </option>
        ))}
      </SelectField>
      {name && <ParameterDiagnosis key={name} slug={slug} fitId={fitId} result={result} name={name} />}
      <Panel title="Convergence report">
        <ConvergenceReport convergence={result.convergence} status={result.status} />
      </Panel>
    </div>
  );
}
