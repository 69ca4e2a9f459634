import { useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import type { Evidence, QuestionDetail } from '@shared/schemas/review';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextAreaField } from '../../../components/ui/field';
import { Panel } from '../../../components/ui/page';
import { isApiRequestError } from '../../../lib/api-client';
import { formatDateTime } from '../../../lib/format';
import { diagnosisPath, fitName, fitPath } from '../../../lib/fits';
import { useAnswerQuestion } from '../api/answer-question';
import { useStepQuestion } from '../api/step-question';
import { QuestionStateBadge } from './question-state-badge';
import { EvidenceCards, subjectPath } from './evidence';

/** What an answer may point to, offered by the screen (the fits and versions of the analysis). */
export type EvidenceChoices = { fits: { id: number; label: string; variant: boolean }[]; versions: number[]; parameters: string[] };

function Byline({ name, at }: { name: string | null; at: string }) {
  return (
    <p className="text-xs text-ink-muted">
      <span className="font-semibold text-ink-soft">{name ?? 'a former member'}</span> · <time dateTime={at}>{formatDateTime(at)}</time>
    </p>
  );
}

const KINDS: { kind: Evidence['kind']; label: string }[] = [
  { kind: 'fit', label: 'a fit' },
  { kind: 'variant', label: 'a variant' },
  { kind: 'diagnosis', label: 'a diagnosis' },
  { kind: 'version', label: 'a model version' },
];

function evidenceWords(e: Evidence): string {
  if (e.kind === 'version') return `model version ${e.version}`;
  if (e.kind === 'diagnosis') return `diagnosis of ${e.parameter} in fit #${e.fitId}`;
  return `${e.kind === 'variant' ? 'variant' : 'fit'} #${e.fitId}`;
}

/** Picks evidence to attach: a fit, a variant, a parameter's diagnosis in a fit, or a model version. */
function EvidencePicker({ choices, onAdd }: { choices: EvidenceChoices; onAdd: (e: Evidence) => void }) {
  const [kind, setKind] = useState<Evidence['kind']>('fit');
  const fits = choices.fits.filter((f) => (kind === 'variant' ? f.variant : true));
  const [fitId, setFitId] = useState<number | ''>('');
  const [parameter, setParameter] = useState('');
  const [version, setVersion] = useState<number | ''>('');
  const ready = kind === 'version' ? version !== '' : fitId !== '' && (kind !== 'diagnosis' || parameter.trim() !== '');
  const add = () => {
    if (!ready) return;
    if (kind === 'version') onAdd({ kind, version: Number(version) });
    else if (kind === 'diagnosis') onAdd({ kind, fitId: Number(fitId), parameter: parameter.trim() });
    else onAdd({ kind, fitId: Number(fitId) });
  };
  const select = 'rounded-md border border-rule-strong bg-paper px-2 py-1 text-sm';
  return (
    <fieldset className="flex flex-wrap items-end gap-2 text-sm">
      <legend className="mb-1 text-xs font-semibold text-ink-soft">Attach evidence (optional)</legend>
      <label className="flex flex-col text-xs text-ink-muted">
        Kind
        <select aria-label="Evidence kind" className={select} value={kind} onChange={(e) => setKind(e.target.value as Evidence['kind'])}>
          {KINDS.map((k) => (
            <option key={k.kind} value={k.kind}>
              {k.label}
            </option>
          ))}
        </select>
      </label>
      {kind === 'version' ? (
        <label className="flex flex-col text-xs text-ink-muted">
          Version
          <select aria-label="Evidence version" className={select} value={version} onChange={(e) => setVersion(e.target.value === '' ? '' : Number(e.target.value))}>
            <option value="">choose…</option>
            {choices.versions.map((v) => (
              <option key={v} value={v}>
                version {v}
              </option>
            ))}
          </select>
        </label>
      ) : (
        <label className="flex flex-col text-xs text-ink-muted">
          Fit
          <select aria-label="Evidence fit" className={`${select} max-w-72`} value={fitId} onChange={(e) => setFitId(e.target.value === '' ? '' : Number(e.target.value))}>
            <option value="">{fits.length ? 'choose…' : kind === 'variant' ? 'no variant yet' : 'no fit yet'}</option>
            {fits.map((f) => (
              <option key={f.id} value={f.id}>
                #{f.id} {f.label}
              </option>
            ))}
          </select>
        </label>
      )}
      {kind === 'diagnosis' && (
        <label className="flex flex-col text-xs text-ink-muted">
          Parameter
          <input aria-label="Evidence parameter" list="evidence-parameters" className={select} value={parameter} onChange={(e) => setParameter(e.target.value)} />
          <datalist id="evidence-parameters">
            {choices.parameters.map((p) => (
              <option key={p} value={p} />
            ))}
          </datalist>
        </label>
      )}
      <Button size="sm" disabled={!ready} onClick={add}>
        Attach
      </Button>
    </fieldset>
  );
}

function AnswerForm({ slug, id, choices }: { slug: string; id: number; choices?: EvidenceChoices }) {
  const answer = useAnswerQuestion(slug, id);
  const [body, setBody] = useState('');
  const [evidence, setEvidence] = useState<Evidence[]>([]);
  const err = isApiRequestError(answer.error) ? answer.error : null;
  const submit = (e: FormEvent) => {
    e.preventDefault();
    answer.mutate(
      { body, evidence },
      {
        onSuccess: () => {
          setBody('');
          setEvidence([]);
        },
      },
    );
  };
  return (
    <form onSubmit={submit} aria-label="Answer" className="flex flex-col gap-2">
      <FormError error={answer.error} />
      <TextAreaField label="Your answer" rows={4} value={body} onChange={(e) => setBody(e.target.value)} required error={err?.fieldMessage('body')} hint="Point to the evidence: attach a fit, a variant, a diagnosis or a version below." />
      {choices && <EvidencePicker choices={choices} onAdd={(e) => setEvidence((list) => (list.some((x) => JSON.stringify(x) === JSON.stringify(e)) ? list : [...list, e]))} />}
      {evidence.length > 0 && (
        <ul aria-label="Evidence to attach" className="flex flex-wrap gap-1.5 text-xs">
          {evidence.map((e, i) => (
            <li key={JSON.stringify(e)} className="flex items-center gap-1 rounded-full border border-rule bg-paper-sunk px-2 py-0.5">
              {evidenceWords(e)}
              <button type="button" aria-label={`Remove ${evidenceWords(e)}`} className="text-ink-muted hover:text-danger" onClick={() => setEvidence((list) => list.filter((_, j) => j !== i))}>
                ×
              </button>
            </li>
          ))}
        </ul>
      )}
      <div>
        <Button type="submit" variant="primary" busy={answer.isPending}>
          Post the answer
        </Button>
      </div>
    </form>
  );
}

function StepForm({ slug, q }: { slug: string; q: QuestionDetail }) {
  const step = useStepQuestion(slug, q.id);
  const [note, setNote] = useState('');
  const resolved = q.state === 'resolved';
  return (
    <div className="flex flex-col gap-2">
      <FormError error={step.error} />
      <TextAreaField
        label={resolved ? 'Note on reopening (optional)' : 'Note on resolving (optional)'}
        rows={2}
        value={note}
        onChange={(e) => setNote(e.target.value)}
        hint="Added to the thread."
      />
      <div>
        <Button variant={resolved ? 'secondary' : 'primary'} busy={step.isPending} onClick={() => step.mutate({ step: resolved ? 'reopen' : 'resolve', note }, { onSuccess: () => setNote('') })}>
          {resolved ? 'Reopen the question' : 'Resolve the question'}
        </Button>
      </div>
    </div>
  );
}

/** A question with its thread, the answer form for those who may answer, and resolve or reopen for a convener. */
export function QuestionThread({ slug, question: q, mayAnswer, mayResolve, choices }: { slug: string; question: QuestionDetail; mayAnswer: boolean; mayResolve: boolean; choices?: EvidenceChoices }) {
  return (
    <div className="flex flex-col gap-4">
      <Panel>
        <div className="flex flex-col gap-2">
          <div className="flex flex-wrap items-center gap-2 text-xs text-ink-muted">
            <QuestionStateBadge state={q.state} />
            <span>
              on{' '}
              <Link to={subjectPath(slug, q)} className="font-mono text-teal-ink hover:underline">
                {q.entry ? q.entry.key : q.about.label}
              </Link>
              {q.entry && (
                <>
                  {' '}
                  ({q.entry.label}) · owner {q.entry.owner?.name ?? 'unassigned'}
                </>
              )}
            </span>
            {q.fit && q.about.kind !== 'fit' && (
              <span>
                · raised on{' '}
                <Link to={q.entry ? diagnosisPath(slug, q.fit.id, q.entry.key) : fitPath(slug, q.fit.id)} className="text-teal-ink hover:underline">
                  {fitName(q.fit)}
                  {q.entry ? `: the diagnosis of ${q.entry.key}` : ''}
                </Link>
              </span>
            )}
          </div>
          <Byline name={q.author?.name ?? null} at={q.createdAt} />
          <p className="text-sm whitespace-pre-wrap text-ink">{q.body}</p>
          {q.state === 'resolved' && q.resolvedAt && (
            <p className="text-xs text-ink-muted">
              Resolved by {q.resolvedBy?.name ?? 'a convener'} on {formatDateTime(q.resolvedAt)}.
            </p>
          )}
        </div>
      </Panel>

      <section aria-label="Thread" className="flex flex-col gap-2">
        <h2 className="text-sm font-semibold text-ink">
          {q.thread.length === 0 ? 'No answers yet' : `Thread (${q.thread.length})`}
        </h2>
        <ol className="flex flex-col gap-2">
          {q.thread.map((a) => (
            <li key={a.id} className="rounded-lg border border-rule bg-paper-raised px-4 py-2">
              <Byline name={a.author?.name ?? null} at={a.createdAt} />
              <p className="mt-1 text-sm whitespace-pre-wrap">{a.body}</p>
              <EvidenceCards slug={slug} cards={a.evidence} />
            </li>
          ))}
        </ol>
      </section>

      {mayAnswer && q.state !== 'resolved' && (
        <Panel title="Answer">
          <AnswerForm slug={slug} id={q.id} choices={choices} />
        </Panel>
      )}
      {mayAnswer && q.state === 'resolved' && !mayResolve && <p className="text-sm text-ink-muted">This question is resolved; a convener can reopen it.</p>}
      {mayResolve && (
        <Panel title={q.state === 'resolved' ? 'Reopen' : 'Resolve'}>
          <StepForm slug={slug} q={q} />
        </Panel>
      )}
    </div>
  );
}
