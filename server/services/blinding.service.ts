import { blindingSettingsSchema, unblindingDecisionSchema, unblindingRequestSchema, type BlindingLog } from '@shared/schemas/review';
import type { ApprovalChecklist } from '@shared/schemas/approval';
import { openItems, unblindingChecklist } from './approval.service';
import type { MemberRole } from '@shared/permissions';
import type { FitOptions } from '@shared/schemas/fit';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import type { AnalysisRow } from '../db/analyses.repository';
import {
  addBlindingEvent,
  blindingEventsOf,
  blindingStateOf,
  invitersOf,
  membershipOf,
  moveBlindingState,
  namesOf,
  pendingRequest,
  setUnblindingApprovals,
} from '../db/blinding.repository';
import type { DbOrTx } from '../db/revisions.repository';
import { withRoles } from './recipients.service';
import { badRequest, conflict, forbidden } from '../errors';
import { regionEntersFit } from '../fit';
import { notifyAdminMembershipChange, notifyUnblindingApprovedOnce, notifyUnblindingDecided, notifyUnblindingRequested } from '../mail/notifications';

/**
 * Blinding, the promise the product makes to a collaboration: while an analysis is not unblinded,
 * no observed count of a blinded region leaves the server. Which regions are blinded is decided by
 * the analysis (analyses.blinded_regions, kept by database triggers): every region that is, or has
 * been since blinding began, a signal region, whatever its role or key is now. Unblinding needs
 * conveners other than the requester, with separation of duties (decideUnblinding).
 */
export type BlindingRule = Pick<AnalysisRow, 'blinding' | 'blindedRegions'>;

/** The one rule every response goes through. */
export function isWithheld(analysis: BlindingRule, region: { key: string; role: string }): boolean {
  return analysis.blinding !== 'unblinded' && (region.role === 'signal' || analysis.blindedRegions.includes(region.key));
}

export function visibleObserved(analysis: BlindingRule, region: { key: string; role: string; observed: number[] | null }) {
  return isWithheld(analysis, region) ? null : region.observed;
}

/** Whether a region's role may change now: never for a blinded region before unblinding. */
export function assertRoleMayChange(analysis: BlindingRule, region: { key: string; role: string }, role: string) {
  if (role !== region.role && isWithheld(analysis, region))
    throw conflict(
      `Region "${region.key}" is blinded: a region that has been a signal region since blinding began keeps its role, and its observed counts stay withheld, until a convener approves unblinding.`,
    );
}

/**
 * The blinded regions whose observed counts a fit with these options would read: an observed fit
 * of any region that enters the likelihood (by the roles saved in its version) and is blinded
 * now. A version frozen while a role was different is judged by the analysis's set, not its roles.
 */
export function withheldInFit(analysis: BlindingRule, regions: { key: string; role: string }[], options: Pick<FitOptions, 'dataset' | 'controlOnly' | 'excludeRegions'>) {
  if (options.dataset !== 'observed') return [];
  const enters = regionEntersFit(options);
  return regions.filter((r) => enters(r.key, r.role) && isWithheld(analysis, r)).map((r) => r.key);
}

/**
 * The blinded regions a stored result was fitted to: while any remain blinded, every number of
 * that result comes from withheld data and none of it is sent.
 */
export function withheldInResult(analysis: BlindingRule, result: { data: { dataset: string }; model: { regionsInFit: string[] }; yields: { prefit: { region: string; role: string }[] } }) {
  if (result.data.dataset !== 'observed') return [];
  const roles = new Map(result.yields.prefit.map((r) => [r.region, r.role]));
  return result.model.regionsInFit.filter((key) => isWithheld(analysis, { key, role: roles.get(key) ?? 'control' }));
}

export const withheldResultMessage = (keys: string[]) =>
  `This fit was made with the observed data of ${keys.length === 1 ? 'the blinded region' : 'blinded regions'} ${keys.map((k) => `"${k}"`).join(', ')}; its results are withheld until a convener approves unblinding.`;

// ---- the log and the state

export async function blindingLog(ctx: AppContext, access: Access): Promise<BlindingLog> {
  const state = await blindingStateOf(ctx.db, access.analysis.id);
  const events = await blindingEventsOf(ctx.db, access.analysis.id);
  const pending = state.blinding === 'unblinding_requested' ? await pendingRequest(ctx.db, access.analysis.id) : undefined;
  return {
    state: state.blinding,
    approvalsRequired: state.unblindingApprovals,
    approvalsGiven: pending?.approvedBy.length ?? 0,
    events: events.map((e) => ({ id: e.id, action: e.action as BlindingLog['events'][number]['action'], note: e.note, by: e.by, at: e.at.toISOString(), checklist: (e.checklist as ApprovalChecklist | null) ?? null })),
  };
}

const STATE_WORDS: Record<AnalysisRow['blinding'], string> = {
  blinded: 'blinded with no request pending',
  unblinding_requested: 'waiting for a convener to decide on unblinding',
  unblinded: 'already unblinded',
};

const stateWords = async (ctx: AppContext, access: Access) => STATE_WORDS[(await blindingStateOf(ctx.db, access.analysis.id)).blinding];

export async function requestUnblinding(ctx: AppContext, access: Access, body: unknown, baseUrl: string): Promise<BlindingLog> {
  const { note } = unblindingRequestSchema.parse(body);
  // the checklist as it stands goes with the request, so the conveners read what the analysts saw
  const checklist = await unblindingChecklist(ctx.db, access.analysis.id);
  if (!(await moveBlindingState(ctx.db, access.analysis.id, 'blinded', 'unblinding_requested', { userId: access.userId, action: 'requested', note, checklist })))
    throw conflict(`Unblinding can be requested only while the analysis is blinded with no request pending; it is ${await stateWords(ctx, access)}.`);
  await notifyUnblindingRequested(ctx, { to: await withRoles(ctx, access.analysis.id, 'convener'), baseUrl, analysis: access.analysis, by: access.userName, note });
  return blindingLog(ctx, access);
}

/**
 * Separation of duties, checked against the pending request: the approver is a convener who is
 * not the requester, has held the convener role since before the request, did not invite the
 * requester or give them their role, and was not invited or given their role by the requester.
 * With two approvals required, the second comes from another convener meeting the same rules.
 */
async function assertMayApprove(ctx: AppContext, access: Access, request: NonNullable<Awaited<ReturnType<typeof pendingRequest>>>) {
  const db = ctx.db;
  const analysisId = access.analysis.id;
  if (request.userId === access.userId) throw forbidden('You requested this unblinding: another convener must approve it.');
  const me = await membershipOf(db, analysisId, access.userId);
  if (!me || me.role !== 'convener') throw forbidden('Only a convener of this analysis approves unblinding.');
  if (me.roleSince.getTime() >= request.at.getTime())
    throw forbidden(`You became a convener of this analysis (${me.roleSince.toISOString()}) after unblinding was requested (${request.at.toISOString()}): a convener who held the role before the request must approve it.`);
  if (request.approvedBy.includes(access.userId)) throw conflict('You have approved this request already: a second convener must approve it.');
  if (request.userId === null) return;
  const requester = await membershipOf(db, analysisId, request.userId);
  const names = await namesOf(db, [request.userId]);
  const who = names.get(request.userId) ?? 'the requester';
  if (requester) {
    if (requester.grantedById === access.userId) throw forbidden(`You gave ${who}, who requested unblinding, their role in this analysis: another convener must approve.`);
    if ((await invitersOf(db, analysisId, requester.email)).includes(access.userId)) throw forbidden(`You invited ${who}, who requested unblinding, to this analysis: another convener must approve.`);
  }
  if (me.grantedById === request.userId) throw forbidden(`${who}, who requested unblinding, gave you your convener role: another convener must approve.`);
  if ((await invitersOf(db, analysisId, me.email)).includes(request.userId)) throw forbidden(`${who}, who requested unblinding, invited you to this analysis: another convener must approve.`);
}

export async function decideUnblinding(ctx: AppContext, access: Access, body: unknown, baseUrl: string): Promise<BlindingLog> {
  const { approve, note } = unblindingDecisionSchema.parse(body);
  if (!approve && !note) throw badRequest('Say why you decline: the analysts read it in the log and the e-mail.', [{ path: ['note'], message: 'A decline needs a note.' }]);
  const state = await blindingStateOf(ctx.db, access.analysis.id);
  const request = state.blinding === 'unblinding_requested' ? await pendingRequest(ctx.db, access.analysis.id) : undefined;
  if (!request) throw conflict(`There is no unblinding request to decide: the analysis is ${STATE_WORDS[state.blinding]}.`);
  if (approve) await assertMayApprove(ctx, access, request);
  // the decision records the checklist as it stood; approving with open items needs a note
  const checklist = await unblindingChecklist(ctx.db, access.analysis.id);
  if (approve && !checklist.ready && !note)
    throw badRequest(`The checklist has open items (${openItems(checklist).slice(0, 3).join('; ')}${openItems(checklist).length > 3 ? '; …' : ''}): to approve nonetheless, say why in a note.`, [
      { path: ['note'], message: 'Approving with open items needs a note.' },
    ]);
  const final = !approve || request.approvedBy.length + 1 >= state.unblindingApprovals;
  if (!final) {
    await addBlindingEvent(ctx.db, { analysisId: access.analysis.id, userId: access.userId, action: 'first_approval', note, checklist });
    await notifyUnblindingApprovedOnce(ctx, { to: await withRoles(ctx, access.analysis.id, 'analyst', 'convener'), baseUrl, analysis: access.analysis, by: access.userName, note });
    return blindingLog(ctx, access);
  }
  const moved = await moveBlindingState(ctx.db, access.analysis.id, 'unblinding_requested', approve ? 'unblinded' : 'blinded', { userId: access.userId, action: approve ? 'approved' : 'declined', note, checklist });
  if (!moved) throw conflict(`There is no unblinding request to decide: the analysis is ${await stateWords(ctx, access)}.`);
  await notifyUnblindingDecided(ctx, { to: await withRoles(ctx, access.analysis.id, 'analyst', 'convener'), baseUrl, analysis: access.analysis, by: access.userName, approved: approve, note });
  return blindingLog(ctx, access);
}

/** How many conveners must approve: changed only while no request is pending, and logged. */
export async function changeBlindingSettings(ctx: AppContext, access: Access, body: unknown): Promise<BlindingLog> {
  const { approvals } = blindingSettingsSchema.parse(body);
  const state = await blindingStateOf(ctx.db, access.analysis.id);
  if (state.blinding !== 'blinded') throw conflict(`The number of approvals can change only while the analysis is blinded with no request pending; it is ${STATE_WORDS[state.blinding]}.`);
  if (state.unblindingApprovals !== approvals)
    await ctx.db.transaction(async (tx) => {
      await setUnblindingApprovals(tx, access.analysis.id, approvals);
      await addBlindingEvent(tx, { analysisId: access.analysis.id, userId: access.userId, action: 'settings', note: `Unblinding now needs ${approvals === 1 ? 'one convener' : 'two conveners'} other than the requester to approve.` });
    });
  return blindingLog(ctx, access);
}

// ---- membership changes while blinded

export type MembershipChange =
  | { kind: 'added'; user: { id: number; name: string }; role: MemberRole }
  | { kind: 'role'; user: { id: number; name: string }; from: MemberRole; role: MemberRole }
  | { kind: 'removed'; user: { id: number; name: string }; role: MemberRole }
  | { kind: 'joined'; user: { id: number; name: string }; role: MemberRole; invitedBy: string };

const ACTIONS = { added: 'member_added', role: 'role_changed', removed: 'member_removed', joined: 'member_joined' } as const;

function describe(change: MembershipChange, actor: string) {
  const role = change.role;
  switch (change.kind) {
    case 'added':
      return `${actor} added ${change.user.name} as ${role}.`;
    case 'role':
      return `${actor} changed ${change.user.name}'s role from ${change.from} to ${role}.`;
    case 'removed':
      return `${actor} removed ${change.user.name} (${role}).`;
    case 'joined':
      return `${change.user.name} accepted ${change.invitedBy}'s invitation and joined as ${role}.`;
  }
}

/**
 * Every membership change on an analysis that is not unblinded goes into its blinding log, in the
 * transaction that makes it. An admin's change to their own membership, and an admin making
 * someone a convener, are also mailed to every convener (after the commit): an admin manages every
 * analysis's members and could otherwise stand on both sides of an unblinding unseen.
 */
export async function logMembershipChange(db: DbOrTx, analysis: Pick<AnalysisRow, 'id' | 'blinding'>, actor: { id: number; name: string }, change: MembershipChange) {
  if (analysis.blinding === 'unblinded') return;
  await addBlindingEvent(db, { analysisId: analysis.id, userId: actor.id, action: ACTIONS[change.kind], note: describe(change, actor.name) });
}

export async function announceMembershipChange(ctx: AppContext, analysis: AnalysisRow, actor: { id: number; name: string; isAdmin: boolean }, change: MembershipChange, baseUrl: string) {
  if (analysis.blinding === 'unblinded' || !actor.isAdmin) return;
  const own = change.user.id === actor.id;
  const convener = change.kind !== 'removed' && change.role === 'convener';
  if (own || convener) await notifyAdminMembershipChange(ctx, { to: await withRoles(ctx, analysis.id, 'convener'), baseUrl, analysis, own, text: describe(change, actor.name) });
}
