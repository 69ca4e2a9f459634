import { Link } from 'react-router';
import type { PruningPreview } from '@shared/schemas/register';
import { MovedParameters, RefitStateBadge, RefitWarnings, SignalStrengthChange } from '../../../components/status/refit-change';
import { fitName, fitPath } from '../../../lib/fits';
import { plural } from '../../../lib/format';

/** What pruning the selection does to the compared fit: μ̂ and σ_μ, and every pull and constraint that moves. */
export function PreviewResult({ slug, preview, stale }: { slug: string; preview: PruningPreview; stale: boolean }) {
  const dropped = preview.selection.filter((s) => s.as === 'dropped').length;
  return (
    <section aria-label="What pruning changes" className="flex flex-col gap-3">
      <div className="flex flex-wrap items-center gap-2 text-xs text-ink-muted">
        <RefitStateBadge state={preview.state} change="without the selection" />
        {preview.state === 'done' && <RefitWarnings warnings={preview.warnings} />}
        <span>
          {plural(preview.selection.length, 'effect')} ({dropped} left out, {preview.selection.length - dropped} kept as normalisation), compared with{' '}
          {preview.fit ? (
            <Link to={fitPath(slug, preview.fit.id)} className="font-medium text-teal-ink hover:underline">
              {fitName(preview.fit)}
            </Link>
          ) : (
            'no fit'
          )}
        </span>
      </div>
      {stale && (
        <p role="note" className="rounded-md border border-amber/40 bg-amber-soft/70 px-3 py-1.5 text-xs text-amber-ink">
          The selection changed since this preview: preview again to see what pruning it changes.
        </p>
      )}
      {preview.state === 'running' && (
        <p role="status" className="text-sm text-ink-soft">
          Refitting without the selection; the numbers appear here when it is done.
        </p>
      )}
      {preview.state === 'failed' && (
        <div role="alert" className="rounded-md border border-danger/30 bg-danger-soft/60 px-3 py-2 text-sm">
          <p className="font-semibold text-danger">The refit without the selection gave no result, so no number is shown.</p>
          <p className="mt-0.5 text-ink-soft">{preview.failure ?? 'The server gave no reason.'}</p>
        </div>
      )}
      {preview.state === 'withheld' && (
        <p className="rounded-md border border-plum/30 bg-plum-soft/50 px-3 py-2 text-sm text-ink-soft">
          The compared fit read the observed data of a region that is blinded now, so nothing compared with it is shown. Run a fit that may be shown (while blinded, a control-region or
          hidden-μ fit) and preview again.
        </p>
      )}
      {preview.state === 'done' && (
        <>
          <SignalStrengthChange mu={preview.mu} muError={preview.muError} />
          {preview.absent.length > 0 && (
            <p className="text-xs text-amber-ink">
              {plural(preview.absent.length, 'selected effect')} {preview.absent.length === 1 ? 'is' : 'are'} not in the compared fit’s version (written since it was frozen): pruning{' '}
              {preview.absent.length === 1 ? 'it' : 'them'} changes nothing there, so this preview cannot show what {preview.absent.length === 1 ? 'it does' : 'they do'}.
            </p>
          )}
          <div>
            <h3 className="mb-1.5 text-xs font-semibold text-ink-soft">Pulls and constraints that move by more than 0.1 ({preview.moved.length})</h3>
            <MovedParameters parameters={preview.moved} label="Pulls and constraints that change" empty="No pull or constraint moves by more than 0.1." compact />
          </div>
        </>
      )}
    </section>
  );
}
