import type { ApprovalChecklist, ChecklistItem } from '@shared/schemas/approval';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import type { DbOrTx } from '../db/revisions.repository';
import { activeEntries, latestVersion, nuisanceOf, questionsWithEntry, succeededFitsOf, succeededScansOf } from '../db/approval.repository';

/** A pull beyond this many standard deviations needs a resolved question on its parameter before unblinding (common practice, no source). */
export const PULL_TO_EXPLAIN = 2;

type Options = { dataset?: string; controlOnly?: boolean; hiddenMu?: boolean };

const STATE_WORDS: Record<string, string> = { draft: 'draft', submitted: 'submitted for review', sent_back: 'sent back', accepted: 'accepted' };

/** Entries accepted, and no question open (the two gates of a version frozen for approval). */
async function registerItems(db: DbOrTx, analysisId: number): Promise<ChecklistItem[]> {
  const list = await activeEntries(db, analysisId);
  const notAccepted = list.filter((e) => e.state !== 'accepted');
  const open = (await questionsWithEntry(db, analysisId)).filter((q) => q.state !== 'resolved');
  return [
    {
      key: 'entries-accepted',
      label: 'Every active register entry is accepted',
      ok: notAccepted.length === 0,
      detail: notAccepted.length === 0 ? `All ${list.length} active entries are accepted.` : `${notAccepted.length} of ${list.length} active entries are not accepted.`,
      open: notAccepted.map((e) => `${e.key}: ${STATE_WORDS[e.state] ?? e.state}`),
    },
    {
      key: 'no-open-questions',
      label: 'No question is open',
      ok: open.length === 0,
      detail: open.length === 0 ? 'Every question is resolved.' : `${open.length} question${open.length === 1 ? ' is' : 's are'} not resolved.`,
      open: open.map((q) => `#${q.id} on ${q.entry} (${q.state}): ${q.title}`),
    },
  ];
}

function checklist(version: number | null, items: ChecklistItem[]): ApprovalChecklist {
  return { version, items, ready: items.every((i) => i.ok), computedAt: new Date().toISOString() };
}

/** The gates of a version frozen for approval, as they stand now. */
export async function versionChecklist(db: DbOrTx, analysisId: number): Promise<ApprovalChecklist> {
  return checklist((await latestVersion(db, analysisId))?.number ?? null, await registerItems(db, analysisId));
}

/**
 * What a convener reads before deciding on unblinding, computed from the newest frozen version:
 * entries accepted; a converged fit of the control regions alone to their data; expected results
 * (an Asimov fit or an expected scan over signal hypotheses); the pulls of the fit with μ hidden,
 * once there is one, each beyond ±2 explained by a resolved question on its parameter; and no
 * open question.
 */
export async function unblindingChecklist(db: DbOrTx, analysisId: number): Promise<ApprovalChecklist> {
  const version = await latestVersion(db, analysisId);
  const [entriesItem, questionsItem] = await registerItems(db, analysisId);
  const fitsOf = version ? await succeededFitsOf(db, version.id) : [];
  const scansOf = version ? await succeededScansOf(db, version.id) : [];
  const opts = (o: unknown) => (o ?? {}) as Options;
  const control = fitsOf.find((f) => opts(f.options).dataset === 'observed' && opts(f.options).controlOnly && f.converged);
  const expected = fitsOf.find((f) => opts(f.options).dataset === 'asimov' && f.converged);
  const expectedScan = scansOf.find((s) => (s.options as { dataset?: string }).dataset === 'expected');
  const hidden = fitsOf.find((f) => opts(f.options).hiddenMu && f.converged);
  const where = version ? `version ${version.number}` : 'no frozen version';
  const items: ChecklistItem[] = [
    entriesItem,
    {
      key: 'control-fit',
      label: 'A converged fit of the control regions to their data, on the newest version',
      ok: !!control,
      detail: control ? `Fit #${control.id} of ${where}.` : `None on ${where}.`,
      open: control ? [] : [`a control-region fit of ${where}`],
    },
    {
      key: 'expected-results',
      label: 'Expected results (an Asimov fit, or an expected scan over the signal hypotheses)',
      ok: !!(expected || expectedScan),
      detail: expected ? `Fit #${expected.id} of ${where}.` : expectedScan ? `Scan #${expectedScan.id} of ${where}.` : `None on ${where}.`,
      open: expected || expectedScan ? [] : [`an Asimov fit of ${where}`],
    },
  ];
  if (hidden) {
    const resolved = new Set((await questionsWithEntry(db, analysisId)).filter((q) => q.state === 'resolved').map((q) => q.entry));
    const pulls = (await nuisanceOf(db, hidden.id)).filter((n) => !n.fixed && Math.abs(n.pull) > PULL_TO_EXPLAIN);
    const unexplained = pulls.filter((n) => !resolved.has(n.name));
    items.push({
      key: 'pulls-explained',
      label: `Every pull beyond ±${PULL_TO_EXPLAIN} in the fit with μ hidden is explained by a resolved question`,
      ok: unexplained.length === 0,
      detail:
        pulls.length === 0
          ? `No pull beyond ±${PULL_TO_EXPLAIN} in fit #${hidden.id}.`
          : `${pulls.length} pull${pulls.length === 1 ? '' : 's'} beyond ±${PULL_TO_EXPLAIN} in fit #${hidden.id}; ${unexplained.length} without a resolved question.`,
      open: unexplained.map((n) => `${n.name}: pull ${n.pull.toFixed(2)}`),
    });
  }
  items.push(questionsItem);
  return checklist(version?.number ?? null, items);
}

export async function getVersionChecklist(ctx: AppContext, access: Access): Promise<ApprovalChecklist> {
  return versionChecklist(ctx.db, access.analysis.id);
}

export async function getUnblindingChecklist(ctx: AppContext, access: Access): Promise<ApprovalChecklist> {
  return unblindingChecklist(ctx.db, access.analysis.id);
}

/** The open items of a checklist, one line each, for a record or a message. */
export const openItems = (c: ApprovalChecklist) => c.items.filter((i) => !i.ok).flatMap((i) => (i.open.length ? i.open.map((o) => `${i.label}: ${o}`) : [i.label]));
