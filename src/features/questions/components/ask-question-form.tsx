import { useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import type { QuestionDetail, QuestionSubject, RaiseQuestion } from '@shared/schemas/review';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { SelectField, TextAreaField, TextField } from '../../../components/ui/field';
import { isApiRequestError } from '../../../lib/api-client';
import { useRaiseQuestion } from '../api/raise-question';

/** What a question may be about, offered by the screen: the analysis's parameters, regions with their bin counts, fits and versions. */
export type SubjectChoices = { parameters: string[]; regions: { key: string; bins: number }[]; fits: { id: number; label: string }[]; versions: number[] };

const SUBJECTS: { kind: QuestionSubject; label: string }[] = [
  { kind: 'parameter', label: 'a parameter' },
  { kind: 'region', label: 'a region' },
  { kind: 'bin', label: 'one bin of a region' },
  { kind: 'fit', label: 'a fit' },
  { kind: 'version', label: 'a model version' },
];

/**
 * Any member's question on anything: a parameter, a region or one of its bins, a fit, or a model
 * version. The server e-mails the parameter's owner and the analysts, or (another subject) the
 * analysts and conveners.
 */
export function AskQuestionForm({ slug, choices }: { slug: string; choices: SubjectChoices }) {
  const raise = useRaiseQuestion(slug);
  const [kind, setKind] = useState<QuestionSubject>('region');
  const [entry, setEntry] = useState('');
  const [region, setRegion] = useState(choices.regions[0]?.key ?? '');
  const [bin, setBin] = useState('1');
  const [fitId, setFitId] = useState(choices.fits[0] ? String(choices.fits[0].id) : '');
  const [version, setVersion] = useState(choices.versions[0] ? String(choices.versions[0]) : '');
  const [title, setTitle] = useState('');
  const [body, setBody] = useState('');
  const [raised, setRaised] = useState<QuestionDetail | null>(null);
  const err = isApiRequestError(raise.error) ? raise.error : null;
  const bins = choices.regions.find((r) => r.key === region)?.bins ?? 0;

  const subject = (): Partial<RaiseQuestion> => {
    switch (kind) {
      case 'parameter':
        return { entry: entry.trim() };
      case 'region':
        return { region };
      case 'bin':
        return { region, bin: Number(bin) };
      case 'fit':
        return { fitId: fitId ? Number(fitId) : null };
      case 'version':
        return { version: version ? Number(version) : null };
    }
  };
  const submit = (e: FormEvent) => {
    e.preventDefault();
    raise.mutate(
      { ...subject(), title, body },
      {
        onSuccess: (q) => {
          setRaised(q);
          setTitle('');
          setBody('');
        },
      },
    );
  };

  return (
    <form onSubmit={submit} aria-label="Ask a question" className="flex flex-col gap-3">
      {raised && (
        <p role="status" className="rounded-md border border-teal/30 bg-teal-soft/60 px-3 py-2 text-sm text-teal-ink">
          Question asked about {raised.about.label}; the people who answer have been e-mailed.{' '}
          <Link to={`/a/${slug}/questions/${raised.id}`} className="font-semibold underline">
            Open the thread
          </Link>
        </p>
      )}
      <FormError error={raise.error} />
      <div className="flex flex-wrap gap-3">
        <SelectField label="About" value={kind} onChange={(e) => setKind(e.target.value as QuestionSubject)}>
          {SUBJECTS.map((s) => (
            <option key={s.kind} value={s.kind}>
              {s.label}
            </option>
          ))}
        </SelectField>
        {kind === 'parameter' && (
          <>
            <TextField label="Parameter" list="ask-parameters" value={entry} onChange={(e) => setEntry(e.target.value)} required error={err?.fieldMessage('entry')} />
            <datalist id="ask-parameters">
              {choices.parameters.map((p) => (
                <option key={p} value={p} />
              ))}
            </datalist>
          </>
        )}
        {(kind === 'region' || kind === 'bin') && (
          <SelectField label="Region" value={region} onChange={(e) => setRegion(e.target.value)} error={err?.fieldMessage('region')}>
            {choices.regions.map((r) => (
              <option key={r.key} value={r.key}>
                {r.key}
              </option>
            ))}
          </SelectField>
        )}
        {kind === 'bin' && <TextField label={`Bin (1 to ${bins})`} type="number" min={1} max={bins} step={1} value={bin} onChange={(e) => setBin(e.target.value)} required error={err?.fieldMessage('bin')} />}
        {kind === 'fit' && (
          <SelectField label="Fit" value={fitId} onChange={(e) => setFitId(e.target.value)} error={err?.fieldMessage('fitId')}>
            {choices.fits.length === 0 && <option value="">no fit yet</option>}
            {choices.fits.map((f) => (
              <option key={f.id} value={f.id}>
                #{f.id} {f.label}
              </option>
            ))}
          </SelectField>
        )}
        {kind === 'version' && (
          <SelectField label="Model version" value={version} onChange={(e) => setVersion(e.target.value)} error={err?.fieldMessage('version')}>
            {choices.versions.length === 0 && <option value="">no version yet</option>}
            {choices.versions.map((v) => (
              <option key={v} value={v}>
                version {v}
              </option>
            ))}
          </SelectField>
        )}
      </div>
      <TextField label="Title" value={title} onChange={(e) => setTitle(e.target.value)} required minLength={3} maxLength={200} error={err?.fieldMessage('title')} />
      <TextAreaField label="Question" rows={3} value={body} onChange={(e) => setBody(e.target.value)} required error={err?.fieldMessage('body')} hint="Say what you see and what you would like explained." />
      <div>
        <Button type="submit" variant="primary" busy={raise.isPending}>
          Ask the question
        </Button>
      </div>
    </form>
  );
}
