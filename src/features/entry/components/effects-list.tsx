import { useState } from 'react';
import type { EntryDetail } from '@shared/schemas/register';
import { Link } from 'react-router';
import { Badge } from '../../../components/ui/badge';
import { ConfirmButton } from '../../../components/ui/confirm-button';
import { formatDateTime } from '../../../lib/format';
import { useDeleteEffect } from '../api/delete-effect';
import { EffectCard, type RegionInfo } from './effect-card';
import { SmoothEffect, smoothingInWords } from './smooth-effect';
import { VariationLegend } from './variation-chart';

type Effect = EntryDetail['effects'][number];

function Provenance({ upload }: { upload: Effect['upload'] }) {
  if (!upload) return <p className="text-2xs text-ink-muted">Entered without a file (imported or typed).</p>;
  return (
    <p className="text-2xs break-all text-ink-muted">
      From <span className="font-medium text-ink-soft">{upload.filename}</span>, {formatDateTime(upload.createdAt)}
      <br />
      <span title="SHA-256 of the uploaded file, kept for provenance" className="font-mono">
        SHA-256 {upload.sha256}
      </span>
    </p>
  );
}

function RemoveEffect({ slug, entryKey, effect }: { slug: string; entryKey: string; effect: Effect }) {
  const remove = useDeleteEffect(slug, entryKey);
  const name = `${effect.region} × ${effect.process} (${effect.kind})`;
  return (
    <ConfirmButton
      align="start"
      label="Remove effect"
      ariaLabel={`Remove effect ${name}`}
      question={`Remove the ${effect.kind} effect on ${effect.region} × ${effect.process}?`}
      confirmLabel="Remove"
      busy={remove.isPending}
      error={remove.error}
      onConfirm={() => remove.mutate(effect.id)}
    />
  );
}

/** A pruned effect: out of the fit, or in it as its overall normalisation only. */
function PrunedBadge({ as }: { as: NonNullable<Effect['pruned']> }) {
  return as === 'dropped' ? (
    <Badge tone="ink" title="Pruned: left out of frozen versions, so out of every fit from the next version on">
      Pruned
    </Badge>
  ) : (
    <Badge tone="ink" title="Pruned: frozen versions keep only its overall normalisation (Σ varied / Σ nominal) as a scale effect">
      Pruned to its normalisation
    </Badge>
  );
}

function PrunedNote({ slug, as }: { slug: string; as: NonNullable<Effect['pruned']> }) {
  return (
    <p className="text-xs text-ink-soft">
      {as === 'dropped' ? 'Left out of frozen versions.' : 'Frozen versions keep only its normalisation.'} A new upload or smoothing brings it back into the fit;{' '}
      <Link to={`/a/${slug}/pruning`} className="font-medium text-teal-ink hover:underline">
        see pruning
      </Link>
      .
    </p>
  );
}

/** A shape whose nominal changed since it was uploaded: when, and the old and new nominal of every bin that changed. */
function StaleNote({ effect }: { effect: Effect }) {
  const stale = effect.stale;
  if (!stale) return null;
  const changed = effect.nominal.map((n, i) => ({ bin: i + 1, before: stale.nominalAtUpload[i], after: n })).filter((b) => b.before !== b.after);
  return (
    <div className="rounded-md border border-amber/40 bg-amber-soft/60 px-2 py-1.5 text-xs text-amber-ink">
      <p className="font-semibold">Nominal changed since upload ({formatDateTime(stale.since)})</p>
      <table className="mt-1 tabular-nums">
        <caption className="sr-only">Old and new nominal in the bins that changed</caption>
        <thead>
          <tr className="text-left">
            <th className="pr-3 font-medium">Bin</th>
            <th className="pr-3 text-right font-medium">Nominal at upload</th>
            <th className="text-right font-medium">Nominal now</th>
          </tr>
        </thead>
        <tbody>
          {changed.slice(0, 12).map((b) => (
            <tr key={b.bin}>
              <td className="pr-3">{b.bin}</td>
              <td className="pr-3 text-right">{b.before}</td>
              <td className="text-right">{b.after}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {changed.length > 12 && <p>and {changed.length - 12} more bins</p>}
    </div>
  );
}

/** The entry's effects, per region × process, each with its preview, warnings and provenance. */
export function EffectsList({ slug, entry, regions, processLabels }: { slug: string; entry: EntryDetail; regions: Map<string, RegionInfo>; processLabels: Map<string, string> }) {
  // The effect being smoothed: its card takes a whole row for the before-and-after charts.
  const [smoothing, setSmoothing] = useState<number | null>(null);
  if (!entry.effects.length)
    return <p className="text-sm text-ink-muted">No variations yet. {entry.can.upload ? 'Upload a file below to add them.' : 'Its owner uploads them.'}</p>;
  const sorted = [...entry.effects].sort((a, b) => a.region.localeCompare(b.region) || a.process.localeCompare(b.process) || a.kind.localeCompare(b.kind));
  return (
    <div className="flex flex-col gap-2">
      <VariationLegend errors />
      <div className="grid gap-3 md:grid-cols-2 xl:grid-cols-3">
        {sorted.map((e) => (
          <EffectCard
            key={e.id}
            region={e.region}
            process={e.process}
            v={e}
            warnings={e.warnings}
            regionInfo={regions.get(e.region)}
            processLabel={processLabels.get(e.process)}
            wide={smoothing === e.id}
            badges={e.pruned && <PrunedBadge as={e.pruned} />}
            footer={
              <>
                {e.pruned && <PrunedNote slug={slug} as={e.pruned} />}
                <StaleNote effect={e} />
                <Provenance upload={e.upload} />
                {e.kind === 'shape' && entry.can.upload && (
                  <SmoothEffect slug={slug} entryKey={entry.key} effect={e} unit={regions.get(e.region)?.unit} open={smoothing === e.id} onOpen={(open) => setSmoothing(open ? e.id : null)} />
                )}
                {e.kind === 'shape' && !entry.can.upload && e.smoothing && (
                  <p className="text-xs text-teal-ink">
                    Smoothed with {smoothingInWords(e.smoothing)} by {e.smoothing.by}, {formatDateTime(e.smoothing.at)}; the variation as uploaded is kept.
                  </p>
                )}
                {entry.can.upload && <RemoveEffect slug={slug} entryKey={entry.key} effect={e} />}
              </>
            }
          />
        ))}
      </div>
    </div>
  );
}
