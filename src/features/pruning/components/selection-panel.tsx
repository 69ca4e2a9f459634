import { useState, type FormEvent } from 'react';
import { Link } from 'react-router';
import type { PruningItem, PruningOverview } from '@shared/schemas/register';
import { Button } from '../../../components/ui/button';
import { FormError } from '../../../components/ui/error-notice';
import { TextAreaField } from '../../../components/ui/field';
import { Panel } from '../../../components/ui/page';
import { fitName, fitPath } from '../../../lib/fits';
import { plural } from '../../../lib/format';
import { usePruningPreview } from '../api/get-preview';
import { usePruneEffects } from '../api/prune-effects';
import { useStartPruningPreview } from '../api/start-preview';
import { PreviewResult } from './preview-result';

const sameSet = (a: number[], b: Set<number>) => a.length === b.size && a.every((x) => b.has(x));

/**
 * The selected effects: preview what pruning them changes (the compared fit refitted without
 * them), then prune them with a comment. While a fit may be compared with, pruning waits for a
 * preview of exactly this selection that has ended.
 */
export function SelectionPanel({
  slug,
  overview,
  selected,
  onClear,
  onPruned,
}: {
  slug: string;
  overview: PruningOverview;
  selected: PruningItem[];
  onClear: () => void;
  onPruned: (count: number) => void;
}) {
  const start = useStartPruningPreview(slug);
  const prune = usePruneEffects(slug);
  const [previewId, setPreviewId] = useState<number | null>(null);
  const preview = usePruningPreview(slug, previewId);
  const [comment, setComment] = useState('');
  const [commentError, setCommentError] = useState<string | undefined>();

  const ids = new Set(selected.map((s) => s.effectId));
  const shown = preview.data ?? null;
  const stale = shown ? !sameSet(shown.selection.map((s) => s.effectId), ids) : false;
  const previewed = shown !== null && !stale && shown.state !== 'running';
  const needsPreview = overview.reference !== null && !previewed;
  const dropped = selected.filter((s) => s.reason?.rule !== 'flat-shape').length;

  const runPreview = () => start.mutate({ effects: selected.map((s) => ({ id: s.effectId })) }, { onSuccess: (p) => setPreviewId(p.id) });
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (!comment.trim()) {
      setCommentError('Say why these effects can go: the comment is kept in each entry’s history.');
      return;
    }
    setCommentError(undefined);
    const count = selected.length;
    prune.mutate(
      { effects: selected.map((s) => ({ id: s.effectId })), comment: comment.trim() },
      {
        onSuccess: () => {
          setComment('');
          setPreviewId(null);
          onPruned(count);
        },
      },
    );
  };

  return (
    <Panel title="Selection" actions={selected.length > 0 && <Button size="sm" variant="ghost" onClick={onClear}>Clear</Button>}>
      <div className="flex flex-col gap-3">
        <p className="text-sm" aria-live="polite">
          {selected.length === 0 ? (
            <span className="text-ink-muted">Select candidates to see what pruning them changes.</span>
          ) : (
            <>
              <span className="font-semibold">{plural(selected.length, 'effect')} selected</span>
              <span className="text-ink-muted">
                {' '}
                · {dropped} left out, {selected.length - dropped} kept as normalisation
              </span>
            </>
          )}
        </p>
        {overview.reference ? (
          <p className="text-xs text-ink-muted">
            A preview refits{' '}
            <Link to={fitPath(slug, overview.reference.id)} className="font-medium text-teal-ink hover:underline">
              {fitName(overview.reference)}
            </Link>{' '}
            (version {overview.reference.version}, the latest converged fit that may be shown) without the selection; nothing is stored as a fit.
          </p>
        ) : (
          <p className="rounded-md border border-amber/40 bg-amber-soft/70 px-3 py-2 text-xs text-amber-ink">
            No converged fit of this analysis may be shown, so no preview can be made: run a fit first (while blinded, a control-region or hidden-μ fit). Effects can still be pruned.
          </p>
        )}
        {overview.reference && (
          <div>
            <Button variant={previewed ? 'secondary' : 'primary'} size="sm" disabled={selected.length === 0} busy={start.isPending} onClick={runPreview}>
              {shown && stale ? 'Preview again' : 'Preview what pruning changes'}
            </Button>
            {start.error ? (
              <div className="mt-2">
                <FormError error={start.error} />
              </div>
            ) : null}
          </div>
        )}
        {shown && <PreviewResult slug={slug} preview={shown} stale={stale} />}
        {selected.length > 0 && (
          <form onSubmit={submit} className="flex flex-col gap-2 border-t border-rule pt-3" aria-label="Prune the selection" noValidate>
            <TextAreaField
              label="Why these effects can go (required)"
              hint="Kept in the history of each entry whose effects are pruned."
              rows={2}
              value={comment}
              onChange={(e) => setComment(e.target.value)}
              error={commentError}
              required
              aria-required
            />
            {prune.error ? <FormError error={prune.error} /> : null}
            <div className="flex flex-wrap items-center gap-3">
              <Button type="submit" variant="primary" size="sm" busy={prune.isPending} disabled={needsPreview}>
                Prune {plural(selected.length, 'effect')}
              </Button>
              {needsPreview && <span className="text-xs text-ink-muted">{shown?.state === 'running' && !stale ? 'Waiting for the preview…' : 'Preview this selection first.'}</span>}
            </div>
          </form>
        )}
      </div>
    </Panel>
  );
}
