import { replicaOptionsSchema, type ReplicaPreview } from '@shared/schemas/register';
import { largestEffectPct, shapeWarnings } from '@shared/validation/variation-warnings';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { entryExists, findEntry, insertEntry, insertUpload, replaceEffect, updateEntryRow } from '../db/entries.repository';
import { indexModel, loadModelRows } from '../db/model.repository';
import { addRevision } from '../db/revisions.repository';
import { badRequest } from '../errors';
import { notifySubmitted } from '../mail/notifications';
import { readUpload } from '../uploads/upload';
import { envelope, principalComponents, replicaSpread } from '../variations/replicas';
import { assertMayEdit } from './entries.service';
import { checkUpload } from './impact-checks.service';
import { withRoles } from './recipients.service';
import { readReplicaFile } from './replica-files';

const METHOD_WORDS = { envelope: 'the envelope of', spread: 'nominal ± the standard deviation of', components: 'the principal components of' } as const;

function parseOptions(raw: unknown) {
  let value: unknown = raw ?? {};
  if (typeof raw === 'string') {
    try {
      value = JSON.parse(raw);
    } catch {
      throw badRequest('The form field "options" must be JSON, e.g. {"method": "envelope"}.');
    }
  }
  return replicaOptionsSchema.parse(value);
}

/**
 * One systematic from N alternative templates of a (region, process) (variations/replicas.ts):
 * previewed, then saved with the raw file kept for provenance. The envelope and the spread
 * become the entry's shape effect on that template; principal components become the entry's
 * effect (the first) and entries of their own for the others (`<key>_pc2`, …: drafts with the
 * entry's owner and group), each with a revision naming the file and its share of the variance.
 */
export async function uploadReplicas(ctx: AppContext, access: Access, key: string, file: Express.Multer.File | undefined, rawOptions: unknown, save: boolean, baseUrl: string): Promise<ReplicaPreview> {
  const entry = await findEntry(ctx.db, access.analysis.id, key);
  assertMayEdit(access, entry, 'upload', 'Only the entry\u2019s owner or an analyst can upload its variations.');
  const options = parseOptions(rawOptions);
  const upload = readUpload(file);
  const model = indexModel(await loadModelRows(ctx.db, access.analysis.id));
  const set = readReplicaFile(upload, model);
  const template = model.template(set.region, set.process)!;
  const nominal = template.nominal;

  const made: { up: number[]; down: number[]; fraction: number | null }[] =
    options.method === 'envelope'
      ? [{ ...envelope(nominal, set.templates), fraction: null }]
      : options.method === 'spread'
        ? [{ ...replicaSpread(nominal, set.templates), fraction: null }]
        : principalComponents(nominal, set.templates, options.keep).components.map((c) => ({ up: c.up, down: c.down, fraction: c.fraction }));
  if (!made.length) throw badRequest('The alternative templates do not differ: there is no variation to make from them.');
  const keys = made.map((_, j) => (j === 0 ? key : `${key}_pc${j + 1}`.slice(0, 64)));
  const exists = await Promise.all(keys.map((k, j) => (j === 0 ? true : entryExists(ctx.db, access.analysis.id, k))));
  const preview: ReplicaPreview = {
    saved: false,
    filename: upload.filename,
    sha256: upload.sha256,
    method: options.method,
    region: set.region,
    process: set.process,
    templates: set.names,
    nominal,
    edges: model.regions.get(set.region)!.edges,
    effects: made.map((m, j) => ({ entry: keys[j], created: !exists[j], up: m.up, down: m.down, fraction: m.fraction, warnings: shapeWarnings(nominal, m.up, m.down) })),
    kept: options.method === 'components' ? made.reduce((s, m) => s + (m.fraction ?? 0), 0) : null,
  };
  if (!save) return preview;

  const ids = { regionId: model.regions.get(set.region)!.id, processId: model.processes.get(set.process)!.id };
  const backToReview = entry.state === 'accepted';
  const what = `${METHOD_WORDS[options.method]} ${set.templates.length} templates of region "${set.region}", process "${set.process}" in "${upload.filename}" (SHA-256 ${upload.sha256.slice(0, 12)}…)`;
  await ctx.db.transaction(async (tx) => {
    const uploadId = await insertUpload(tx, { analysisId: access.analysis.id, entryId: entry.id, userId: access.userId, filename: upload.filename, mediaType: upload.mediaType, sha256: upload.sha256, size: upload.size, content: upload.text });
    for (const [j, effect] of preview.effects.entries()) {
      const target = j === 0 ? entry : effect.created
        ? await insertEntry(tx, { analysisId: access.analysis.id, key: effect.entry, label: `${entry.label}, component ${j + 1}`, groupId: entry.groupId, ownerId: entry.ownerId, description: `Principal component ${j + 1} of the replica set of "${key}".` })
        : await findEntry(tx, access.analysis.id, effect.entry);
      await replaceEffect(tx, { entryId: target.id, ...ids, kind: 'shape', up: effect.up, down: effect.down, warnings: effect.warnings, largestPct: largestEffectPct('shape', effect.up, effect.down, nominal), uploadId, nominalAtUpload: nominal });
      if (j === 0) await updateEntryRow(tx, entry.id, { state: backToReview ? 'submitted' : entry.state, version: entry.version + 1, updatedAt: new Date() });
      const share = effect.fraction !== null ? ` Component ${j + 1}: ${(100 * effect.fraction).toFixed(1)} % of the variance.` : '';
      await addRevision(tx, {
        analysisId: access.analysis.id,
        entryId: target.id,
        authorId: access.userId,
        action: 'replicas.uploaded',
        summary: `${effect.created ? 'Created from' : 'Shape effect from'} ${what}.${share}`,
        after: { upload: uploadId, sha256: upload.sha256, method: options.method, keep: options.method === 'components' ? options.keep : undefined, templates: set.names, fraction: effect.fraction },
      });
    }
  });
  if (backToReview) await notifySubmitted(ctx, { to: await withRoles(ctx, access.analysis.id, 'convener'), baseUrl, analysis: access.analysis, entry, by: access.userName, reason: 'uploaded a replica set for the accepted' });
  await checkUpload(ctx, access, entry);
  return { ...preview, saved: true };
}
