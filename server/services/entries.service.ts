import { untilEntryChanges, untilModelChanges } from '../cache/change-notices';
import { can } from '@shared/permissions';
import {
  entryInputSchema,
  entryPatchSchema,
  reviewActionSchema,
  variationOptionsSchema,
  type EntryDetail,
  type VariationPreview,
} from '@shared/schemas/register';
import type { EntryState } from '@shared/schemas/api';
import { largestEffectPct } from '@shared/validation/variation-warnings';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import {
  deleteEffectRow,
  effectsOf,
  effectsWithUploads,
  entryExists,
  entryForPage,
  findEffect,
  findEntry,
  groupName,
  insertEntry,
  insertUpload,
  isMember,
  replaceEffect,
  updateEntryRow,
  type EntryRow,
} from '../db/entries.repository';
import { indexModel, cachedModelIndex, loadModelRows } from '../db/model.repository';
import { addRevision, entryRevisions, type DbOrTx } from '../db/revisions.repository';
import { badRequest, conflict, forbidden, notFound, unprocessable } from '../errors';
import { notifyAccepted, notifySentBack, notifySubmitted } from '../mail/notifications';
import { readUpload } from '../uploads/upload';
import { groupIdFor } from './groups.service';
import { personal, withRoles } from './recipients.service';
import { readVariationFile, shapePrecision } from './variation-files';
import { checkUpload, latestUploadCheck, uploadCheckView } from './impact-checks.service';


/** What the caller may do with this entry: the permission table plus ownership and review state. */
export function entryPermissions(access: Access, entry: Pick<EntryRow, 'ownerId' | 'state'>): EntryDetail['can'] {
  const has = (a: Parameters<typeof can>[2]) => can(access.role, access.isAdmin, a);
  const owns = entry.ownerId === access.userId;
  const edit = has('entry.edit') || (has('entry.editOwn') && owns);
  const live = entry.state !== 'retired';
  return {
    edit: edit && live,
    upload: has('variation.upload') && edit && live,
    submit: edit && (entry.state === 'draft' || entry.state === 'sent_back'),
    accept: has('entry.review') && entry.state === 'submitted',
    sendBack: has('entry.review') && entry.state === 'submitted',
    retire: (has('entry.edit') || has('entry.review')) && live,
    reopen: has('entry.edit') && entry.state === 'retired',
    reassign: has('entry.edit') && live,
  };
}

/**
 * Rights before state: whether the caller could edit this entry in some state (owner or analyst).
 * A caller without the right hears 403; one with it, whose entry is in the wrong state, hears 409.
 */
export function assertMayEdit(access: Access, entry: Pick<EntryRow, 'ownerId' | 'state'>, what: 'edit' | 'upload', message: string) {
  if (!entryPermissions(access, { ...entry, state: 'draft' })[what]) throw forbidden(message);
  if (entry.state === 'retired') throw conflict(`This entry is retired; reopen it before ${what === 'edit' ? 'changing it' : 'uploading'}.`);
}

const snapshot = (e: EntryRow, group: string | null) => ({
  label: e.label,
  group,
  ownerId: e.ownerId,
  description: e.description,
  justification: e.justification,
  references: e.references,
  state: e.state,
});

async function assertOwnerIsMember(db: DbOrTx, analysisId: number, ownerId: number | null) {
  if (ownerId === null) return;
  if (!(await isMember(db, analysisId, ownerId))) throw unprocessable('The owner must be a member of this analysis: add them on the Members screen first.', [{ path: ['ownerId'], message: 'is not a member of this analysis' }]);
}

/**
 * One entry as its page shows it. Its effects, drawn over the templates and binning they vary,
 * are the bulk of it and change only with the model: they are kept until the model changes
 * (`effectViews`); the entry's own fields, owner, group, history and newest check until the entry
 * changes (`entryPage`).
 */
export async function getEntryDetail(ctx: AppContext, access: Access, key: string): Promise<EntryDetail> {
  const { row, history, check } = await entryPage(ctx, access.analysis.id, key);
  const { entry } = row;
  const effectList = await effectViews(ctx, access.analysis.id, entry.id);
  return {
    key: entry.key,
    label: entry.label,
    group: row.group,
    owner: row.owner?.id ? row.owner : null,
    description: entry.description,
    justification: entry.justification,
    references: entry.references,
    state: entry.state,
    version: entry.version,
    createdAt: entry.createdAt.toISOString(),
    updatedAt: entry.updatedAt.toISOString(),
    effects: effectList,
    revisions: history.map(({ revision: r, author }) => ({
      id: r.id,
      action: r.action,
      summary: r.summary,
      author: author?.id ? author : null,
      createdAt: r.createdAt.toISOString(),
      before: r.before ?? undefined,
      after: r.after ?? undefined,
    })),
    can: entryPermissions(access, entry),
    impactCheck: uploadCheckView(access, check),
  };
}

/**
 * An entry's own fields, owner, group, history and newest upload check, shared by every reader until
 * that entry changes (or its group, its checks, or someone's name): a write to another entry leaves
 * this page as it is.
 */
function entryPage(ctx: AppContext, analysisId: number, key: string) {
  return untilEntryChanges(ctx.client, analysisId, key, async () => {
    const row = await entryForPage(ctx.db, analysisId, key);
    if (!row) throw notFound(`Register entry "${key}"`);
    const [history, check] = [await entryRevisions(ctx.db, row.entry.id), await latestUploadCheck(ctx, row.entry.id)];
    return { entryId: row.entry.id, value: { row, history, check } };
  });
}

/** An entry's effects as its page draws them, shared by every reader until the model changes. */
function effectViews(ctx: AppContext, analysisId: number, entryId: number): Promise<EntryDetail['effects']> {
  return untilModelChanges(ctx.client, analysisId, `effects of entry ${entryId}`, async () => {
    const model = await cachedModelIndex(ctx, analysisId);
    const effectRows = await effectsWithUploads(ctx.db, entryId);
    return effectRows.map(({ effect: e, upload }) => {
      const region = model.regionById.get(e.regionId)!;
      const process = model.processById.get(e.processId)!;
      const template = model.template(region.key, process.key);
      const precision =
        e.kind === 'shape' && template
          ? shapePrecision(template.nominal, e.up as number[], e.down as number[], { up: e.upShiftVariance, down: e.downShiftVariance }, template.variance)
          : null;
      return {
        precision,
        smoothing: e.smoothing ? { method: e.smoothing.method, params: e.smoothing.params, by: e.smoothing.by, at: e.smoothing.at } : null,
        id: e.id,
        pruned: e.pruned ? (e.prunedToScale ? ('normalisation' as const) : ('dropped' as const)) : null,
        region: region.key,
        process: process.key,
        kind: e.kind,
        up: e.up,
        down: e.down,
        nominal: model.template(region.key, process.key)?.nominal ?? [],
        edges: region.edges,
        warnings: e.warnings,
        upload: upload?.id ? { ...upload, createdAt: upload.createdAt.toISOString() } : null,
        stale: e.staleSince && e.nominalAtUpload ? { since: e.staleSince.toISOString(), nominalAtUpload: e.nominalAtUpload } : null,
      };
    });
  });
}

export async function createEntry(ctx: AppContext, access: Access, body: unknown): Promise<EntryDetail> {
  const input = entryInputSchema.parse(body);
  const analysisId = access.analysis.id;
  if (await entryExists(ctx.db, analysisId, input.key)) throw conflict(`The register already has an entry with the key "${input.key}".`);
  await assertOwnerIsMember(ctx.db, analysisId, input.ownerId);
  await ctx.db.transaction(async (tx) => {
    const entry = await insertEntry(tx, {
      analysisId,
      key: input.key,
      label: input.label,
      groupId: await groupIdFor(tx, analysisId, input.group),
      ownerId: input.ownerId,
      description: input.description,
      justification: input.justification,
      references: input.references,
    });
    await addRevision(tx, { analysisId, entryId: entry.id, authorId: access.userId, action: 'created', summary: `Created "${input.label}" as a draft.`, after: snapshot(entry, input.group) });
  });
  return getEntryDetail(ctx, access, input.key);
}

/** Editing metadata: stale versions are refused; an accepted entry that changes goes back to review. */
export async function updateEntry(ctx: AppContext, access: Access, key: string, body: unknown, baseUrl: string): Promise<EntryDetail> {
  const input = entryPatchSchema.parse(body);
  const entry = await findEntry(ctx.db, access.analysis.id, key);
  const rights = entryPermissions(access, entry);
  assertMayEdit(access, entry, 'edit', 'Only the entry\u2019s owner or an analyst can edit it.');
  if (input.version !== entry.version) throw conflict(`Someone else changed "${key}" since you opened it (version ${entry.version}, yours ${input.version}). Reload it, then make your change again.`);
  if (input.ownerId !== undefined && input.ownerId !== entry.ownerId) {
    if (!rights.reassign) throw forbidden('Only an analyst can give an entry another owner.');
    await assertOwnerIsMember(ctx.db, access.analysis.id, input.ownerId);
  }
  const oldGroup = await groupName(ctx.db, entry.groupId);
  if (input.group !== undefined && input.group !== oldGroup && !can(access.role, access.isAdmin, 'groups.edit'))
    throw forbidden('Only an analyst can move an entry to another group.');

  const { version: _v, group, ...fields } = input;
  const changed = Object.entries(fields).filter(([k, v]) => v !== undefined && JSON.stringify(v) !== JSON.stringify(entry[k as keyof EntryRow]));
  const groupChanged = group !== undefined && group !== oldGroup;
  if (!changed.length && !groupChanged) return getEntryDetail(ctx, access, key);

  const backToReview = entry.state === 'accepted';
  await ctx.db.transaction(async (tx) => {
    const after = await updateEntryRow(tx, entry.id, {
      ...Object.fromEntries(changed),
      ...(groupChanged ? { groupId: await groupIdFor(tx, access.analysis.id, group ?? null) } : {}),
      state: backToReview ? 'submitted' : entry.state,
      version: entry.version + 1,
      updatedAt: new Date(),
    });
    const names = [...changed.map(([k]) => k), ...(groupChanged ? ['group'] : [])];
    await addRevision(tx, {
      analysisId: access.analysis.id,
      entryId: entry.id,
      authorId: access.userId,
      action: 'edited',
      summary: `Changed ${names.join(', ')}.${backToReview ? ' The entry was accepted, so it returns to review.' : ''}`,
      before: snapshot(entry, oldGroup),
      after: snapshot(after, groupChanged ? (group ?? null) : oldGroup),
    });
  });
  if (backToReview) await notifySubmitted(ctx, { to: await withRoles(ctx, access.analysis.id, 'convener'), baseUrl, analysis: access.analysis, entry, by: access.userName, reason: 'changed the accepted' });
  return getEntryDetail(ctx, access, key);
}

const REVIEW: Record<string, { from: EntryState[]; to: EntryState; allowed: keyof EntryDetail['can']; verb: string }> = {
  submit: { from: ['draft', 'sent_back'], to: 'submitted', allowed: 'submit', verb: 'Submitted for review' },
  accept: { from: ['submitted'], to: 'accepted', allowed: 'accept', verb: 'Accepted' },
  send_back: { from: ['submitted'], to: 'sent_back', allowed: 'sendBack', verb: 'Sent back' },
  retire: { from: ['draft', 'submitted', 'accepted', 'sent_back'], to: 'retired', allowed: 'retire', verb: 'Retired' },
  reopen: { from: ['retired'], to: 'draft', allowed: 'reopen', verb: 'Reopened as a draft' },
};

export async function reviewEntry(ctx: AppContext, access: Access, key: string, body: unknown, baseUrl: string): Promise<EntryDetail> {
  const { action, comment } = reviewActionSchema.parse(body);
  const step = REVIEW[action];
  const entry = await findEntry(ctx.db, access.analysis.id, key);
  // rights first: a caller who may not take this step in any state it applies to hears 403, not the entry's state
  if (!step.from.some((state) => entryPermissions(access, { ...entry, state })[step.allowed])) throw forbidden();
  if (!step.from.includes(entry.state))
    throw conflict(`"${key}" is ${entry.state.replace('_', ' ')}; "${action.replace('_', ' ')}" applies only to an entry that is ${step.from.map((s) => s.replace('_', ' ')).join(' or ')}.`);
  if (action === 'send_back' && !comment.trim()) throw badRequest('Say what must change: sending an entry back needs a comment.', [{ path: ['comment'], message: 'is required when sending back' }]);
  await ctx.db.transaction(async (tx) => {
    await updateEntryRow(tx, entry.id, { state: step.to, version: entry.version + 1, updatedAt: new Date() });
    await addRevision(tx, {
      analysisId: access.analysis.id,
      entryId: entry.id,
      authorId: access.userId,
      action: `review.${action}`,
      summary: `${step.verb}.${comment ? ` Comment: ${comment}` : ''}`,
      before: { state: entry.state },
      after: { state: step.to, comment: comment || undefined },
    });
  });
  const note = { baseUrl, analysis: access.analysis, entry, by: access.userName, comment };
  if (action === 'submit') await notifySubmitted(ctx, { ...note, to: await withRoles(ctx, access.analysis.id, 'convener'), reason: 'submitted' });
  if (action === 'accept') await notifyAccepted(ctx, { ...note, to: await personal(ctx, entry.ownerId) });
  if (action === 'send_back') await notifySentBack(ctx, { ...note, to: await personal(ctx, entry.ownerId) });
  return getEntryDetail(ctx, access, key);
}

function parseOptions(raw: unknown) {
  if (raw === undefined || raw === '') return variationOptionsSchema.parse({});
  let value: unknown = raw;
  if (typeof raw === 'string') {
    try {
      value = JSON.parse(raw);
    } catch {
      throw badRequest('The form field "options" must be JSON, e.g. {"mirror": true}.');
    }
  }
  return variationOptionsSchema.parse(value);
}

/**
 * assertCanUpload → readVariationFile (errors refuse the whole file) → preview; with save:
 * keep the raw file with its SHA-256, replace the effects it covers, record a revision, all in
 * one transaction; an accepted entry returns to review and the conveners are told.
 */
export async function uploadVariations(
  ctx: AppContext,
  access: Access,
  key: string,
  file: Express.Multer.File | undefined,
  rawOptions: unknown,
  save: boolean,
  baseUrl: string,
): Promise<VariationPreview> {
  const entry = await findEntry(ctx.db, access.analysis.id, key);
  assertMayEdit(access, entry, 'upload', 'Only the entry\u2019s owner or an analyst can upload its variations.');
  const options = parseOptions(rawOptions);
  const upload = readUpload(file);
  const model = indexModel(await loadModelRows(ctx.db, access.analysis.id));
  const ready = readVariationFile(upload, model, options);

  const current = await effectsOf(ctx.db, entry.id);
  const idOf = (e: { region: string; process: string }) => ({ regionId: model.regions.get(e.region)!.id, processId: model.processes.get(e.process)!.id });
  const replaces = (e: { kind: string; region: string; process: string }) => current.some((c) => c.kind === e.kind && c.regionId === idOf(e).regionId && c.processId === idOf(e).processId);
  const preview: VariationPreview = {
    saved: false,
    filename: upload.filename,
    sha256: upload.sha256,
    effects: ready.map(({ shiftVariance: _v, ...e }) => ({ ...e, replaces: replaces(e) })),
  };
  if (!save) return preview;

  const backToReview = entry.state === 'accepted';
  await ctx.db.transaction(async (tx) => {
    const uploadId = await insertUpload(tx, {
      analysisId: access.analysis.id,
      entryId: entry.id,
      userId: access.userId,
      filename: upload.filename,
      mediaType: upload.mediaType,
      sha256: upload.sha256,
      size: upload.size,
      content: upload.text,
    });
    for (const e of ready)
      await replaceEffect(tx, {
        entryId: entry.id,
        ...idOf(e),
        kind: e.kind,
        up: e.up,
        down: e.down,
        upShiftVariance: e.shiftVariance.up,
        downShiftVariance: e.shiftVariance.down,
        warnings: e.warnings,
        largestPct: largestEffectPct(e.kind, e.up, e.down, e.nominal),
        uploadId,
        // a shape is made against this nominal: if it changes, the effect goes stale
        nominalAtUpload: e.kind === 'shape' ? e.nominal : null,
      });
    await updateEntryRow(tx, entry.id, { state: backToReview ? 'submitted' : entry.state, version: entry.version + 1, updatedAt: new Date() });
    const counts = (['shape', 'scale'] as const).map((k) => [k, ready.filter((e) => e.kind === k).length] as const).filter(([, n]) => n);
    const warnings = ready.reduce((n, e) => n + e.warnings.length, 0);
    await addRevision(tx, {
      analysisId: access.analysis.id,
      entryId: entry.id,
      authorId: access.userId,
      action: 'variations.uploaded',
      summary: `Uploaded "${upload.filename}" (SHA-256 ${upload.sha256.slice(0, 12)}…): ${counts.map(([k, n]) => `${n} ${k} effect${n > 1 ? 's' : ''}`).join(', ')}${warnings ? `, ${warnings} warning${warnings > 1 ? 's' : ''}` : ''}.${backToReview ? ' The entry was accepted, so it returns to review.' : ''}`,
      before: { effects: current.map((c) => ({ region: model.regionById.get(c.regionId)!.key, process: model.processById.get(c.processId)!.key, kind: c.kind })) },
      after: { upload: uploadId, sha256: upload.sha256, effects: ready.map((e) => ({ region: e.region, process: e.process, kind: e.kind, transformed: e.transformed })) },
    });
  });
  if (backToReview) await notifySubmitted(ctx, { to: await withRoles(ctx, access.analysis.id, 'convener'), baseUrl, analysis: access.analysis, entry, by: access.userName, reason: 'uploaded new variations for the accepted' });
  // what the new effects do to the latest fit, shown on the entry once the refit is done
  await checkUpload(ctx, access, entry);
  return { ...preview, saved: true };
}

export async function deleteEffect(ctx: AppContext, access: Access, key: string, effectId: number, baseUrl: string): Promise<EntryDetail> {
  const entry = await findEntry(ctx.db, access.analysis.id, key);
  assertMayEdit(access, entry, 'edit', 'Only the entry\u2019s owner or an analyst can remove its effects.');
  const effect = await findEffect(ctx.db, entry.id, effectId);
  if (!effect) throw notFound(`Effect ${effectId} of "${key}"`);
  const model = indexModel(await loadModelRows(ctx.db, access.analysis.id));
  const where = `${effect.kind} effect on region "${model.regionById.get(effect.regionId)!.key}", process "${model.processById.get(effect.processId)!.key}"`;
  const backToReview = entry.state === 'accepted';
  await ctx.db.transaction(async (tx) => {
    await deleteEffectRow(tx, effect.id);
    await updateEntryRow(tx, entry.id, { state: backToReview ? 'submitted' : entry.state, version: entry.version + 1, updatedAt: new Date() });
    await addRevision(tx, {
      analysisId: access.analysis.id,
      entryId: entry.id,
      authorId: access.userId,
      action: 'effect.removed',
      summary: `Removed the ${where}.`,
      before: { effect: { kind: effect.kind, up: effect.up, down: effect.down } },
    });
  });
  if (backToReview) await notifySubmitted(ctx, { to: await withRoles(ctx, access.analysis.id, 'convener'), baseUrl, analysis: access.analysis, entry, by: access.userName, reason: 'removed an effect of the accepted' });
  return getEntryDetail(ctx, access, key);
}
