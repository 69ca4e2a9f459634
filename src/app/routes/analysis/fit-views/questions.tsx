import { useEffect, useRef, useState } from 'react';
import { useSearchParams } from 'react-router';
import type { FitDetail, FitResultHead } from '@shared/schemas/fits';
import { Panel } from '../../../../components/ui/page';
import { fitName } from '../../../../lib/fits';
import { useCan } from '../../../../features/analyses/use-can';
import { ImpactRanking } from '../../../../features/fits/components/impact-ranking';
import { chosenPoi } from '../../../../features/fits/poi';
import { PullsView } from '../../../../features/fits/components/pulls-view';
import { RaiseQuestionForm } from '../../../../features/questions/components/raise-question-form';
import { useQuestionMarks } from '../../../../features/questions/use-question-marks';

/** The impact ranking with the question markers and, for a convener, a question raised from a row. */
export function ImpactsWithQuestions({ slug, fit, result }: { slug: string; fit: FitDetail; result: FitResultHead }) {
  const marks = useQuestionMarks(slug);
  const mayRaise = useCan(slug)('question.raise');
  const [raising, setRaising] = useState<string | null>(null);
  // the parameter of interest the ranking is on lives in the address (?poi=key), so a link opens the same view
  const [params, setParams] = useSearchParams();
  const poi = chosenPoi(result, params.get('poi'));
  const choosePoi = (name: string) =>
    setParams(
      (p) => {
        const next = new URLSearchParams(p);
        if (name === 'mu') next.delete('poi');
        else next.set('poi', name);
        return next;
      },
      { replace: true },
    );
  const panel = useRef<HTMLDivElement>(null);
  // The form opens above the table: the focus moves into it, and back to the row's button when it
  // closes (found again by name: raising a question redraws the table's rows).
  const view = useRef<HTMLDivElement>(null);
  useEffect(() => {
    if (!raising) return;
    panel.current?.scrollIntoView?.({ behavior: 'smooth', block: 'nearest' });
    panel.current?.querySelector<HTMLElement>('input, textarea')?.focus({ preventScroll: true });
  }, [raising]);
  const close = () => {
    const name = raising;
    setRaising(null);
    if (name) view.current?.querySelector<HTMLElement>(`[data-raise="${CSS.escape(name)}"]`)?.focus();
  };
  return (
    <div ref={view} className="flex flex-col gap-3">
      {raising && (
        <div ref={panel}>
          <Panel title={`Raise a question on ${raising}`}>
            <RaiseQuestionForm key={raising} slug={slug} entry={raising} fit={{ id: fit.id, label: fitName(fit) }} onCancel={close} />
          </Panel>
        </div>
      )}
      <ImpactRanking slug={slug} fitId={fit.id} fitLabel={fitName(fit)} result={result} poi={poi} onPoiChange={choosePoi} marks={marks} onRaise={mayRaise ? setRaising : undefined} />
    </div>
  );
}

/** The pulls with the question markers. */
export function PullsWithQuestions({ slug, fit, result }: { slug: string; fit: FitDetail; result: FitResultHead }) {
  const marks = useQuestionMarks(slug);
  return <PullsView result={result} slug={slug} fitId={fit.id} marks={marks} />;
}
