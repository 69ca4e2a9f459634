import { createHash } from 'node:crypto';
import { can } from '@shared/permissions';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { freezeVersionSchema, type ModelVersion } from '@shared/schemas/fits';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { addRevision } from '../db/revisions.repository';
import { findVersionRow, insertNextVersion, listVersionRows, type VersionRow } from '../db/versions.repository';
import { badRequest, forbidden, notFound, unprocessable } from '../errors';
import { activeEntries } from '../db/approval.repository';
import { openItems, versionChecklist } from './approval.service';
import { resolveStaleEffects } from './stale-effects.service';
import { buildExchange } from './exchange-export.service';
import { hypothesisIssues } from './signal-hypotheses.service';

const view = (v: VersionRow, createdBy: string | null): ModelVersion => {
  const model = v.model as ExchangeModel;
  return {
    number: v.number,
    note: v.note,
    forApproval: v.forApproval,
    sha256: v.sha256,
    createdAt: v.createdAt.toISOString(),
    createdBy,
    counts: { regions: model.regions.length, processes: model.processes.length, systematics: model.systematics.length },
    register: v.register ? v.register.reduce<Record<string, number>>((n, e) => ({ ...n, [e.state]: (n[e.state] ?? 0) + 1 }), {}) : null,
    override: v.approvalOverride ?? null,
  };
};

export async function listVersions(ctx: AppContext, access: Access): Promise<ModelVersion[]> {
  const rows = await listVersionRows(ctx.db, access.analysis.id);
  return rows.map((r) => view(r.version, r.by));
}

export async function findVersion(ctx: AppContext, analysisId: number, number: number) {
  const v = await findVersionRow(ctx.db, analysisId, number);
  if (!v) throw notFound(`Model version ${number}`);
  return v;
}

/**
 * Freezes the current model into the next numbered, immutable version: the whole exchange
 * document (with all data, since it never leaves the server as such) and its SHA-256. A signal
 * hypothesis that no longer fits the model (a shape effect added since on a template it
 * replaces) is refused by name: every fit reads the version by the exchange file's rules.
 */
export async function freezeVersion(ctx: AppContext, access: Access, body: unknown): Promise<ModelVersion> {
  const input = freezeVersionSchema.parse(body);
  if (input.forApproval && !can(access.role, access.isAdmin, 'version.approve')) throw forbidden('Only a convener freezes a version for approval.');
  if (input.overrideReason && !input.forApproval) throw badRequest('A reason to override open items is given only when freezing a version for approval.', [{ path: ['overrideReason'], message: 'Only with forApproval.' }]);
  return ctx.db.transaction(async (tx) => {
    // for approval: every active entry accepted and no question open, or a convener's written reason
    let approvalOverride: { reason: string; by: string; openItems: string[] } | null = null;
    if (input.forApproval) {
      const gates = await versionChecklist(tx, access.analysis.id);
      if (!gates.ready) {
        const open = openItems(gates);
        if (!input.overrideReason)
          throw badRequest(
            `A version for approval needs every active entry accepted and no open question (${open.slice(0, 3).join('; ')}${open.length > 3 ? `; and ${open.length - 3} more` : ''}). Settle them first, or give your reason to freeze it nonetheless.`,
            [{ path: ['overrideReason'], message: 'Open items remain: give a written reason to freeze for approval nonetheless.' }],
          );
        approvalOverride = { reason: input.overrideReason, by: access.userName, openItems: open };
      }
    }
    // variations made against a nominal that changed since: kept as a relative shift or as absolute yields, as chosen
    const staleLines = await resolveStaleEffects(tx, access, input.staleChoices);
    const register = await activeEntries(tx, access.analysis.id);
    const model = await buildExchange(tx, access.analysis, { withhold: false });
    if (!model.regions.length || !model.processes.length) throw unprocessable('The model has no regions or no processes yet: there is nothing to freeze.');
    const issues = hypothesisIssues(model);
    if (issues.length)
      throw unprocessable(
        `The signal hypotheses no longer fit the model, so it cannot be frozen. Replace them with what is missing, or remove them (model screen, Signal hypotheses): ${issues
          .slice(0, 3)
          .map((i) => (i.hypothesis ? `"${i.hypothesis}" ${i.message}` : i.message))
          .join('; ')}${issues.length > 3 ? ` (and ${issues.length - 3} more)` : ''}.`,
        issues.map((i) => ({ path: ['signalHypotheses', ...(i.hypothesis ? [i.hypothesis] : [])], message: i.message })),
      );
    const json = JSON.stringify(model);
    const v = await insertNextVersion(tx, {
      analysisId: access.analysis.id,
      note: input.note,
      forApproval: input.forApproval,
      model,
      sha256: createHash('sha256').update(json).digest('hex'),
      register,
      approvalOverride,
      createdById: access.userId,
    });
    await addRevision(tx, {
      analysisId: access.analysis.id,
      authorId: access.userId,
      action: 'version.frozen',
      summary: `Froze model version ${v.number}${input.forApproval ? ' for approval' : ''}: ${model.regions.length} regions, ${model.systematics.length} systematics.${input.note ? ` Note: ${input.note}` : ''}${approvalOverride ? ` With ${approvalOverride.openItems.length} open item(s), for this reason: ${approvalOverride.reason}` : ''}${staleLines.length ? ` Stale effects: ${staleLines.join('; ')}.` : ''}`,
      after: { number: v.number, sha256: v.sha256, ...(staleLines.length ? { staleChoices: input.staleChoices, stale: staleLines } : {}) },
    });
    return view(v, access.userName);
  });
}
