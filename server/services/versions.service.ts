import { createHash } from 'node:crypto';
import { can } from '@shared/permissions';
import type { ExchangeModel } from '@shared/schemas/exchange';
import { freezeVersionSchema, type ModelVersion } from '@shared/schemas/fits';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { addRevision } from '../db/revisions.repository';
import { findVersionRow, insertNextVersion, listVersionRows, type VersionRow } from '../db/versions.repository';
import { forbidden, notFound, unprocessable } from '../errors';
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
  return ctx.db.transaction(async (tx) => {
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
      createdById: access.userId,
    });
    await addRevision(tx, {
      analysisId: access.analysis.id,
      authorId: access.userId,
      action: 'version.frozen',
      summary: `Froze model version ${v.number}${input.forApproval ? ' for approval' : ''}: ${model.regions.length} regions, ${model.systematics.length} systematics.${input.note ? ` Note: ${input.note}` : ''}`,
      after: { number: v.number, sha256: v.sha256 },
    });
    return view(v, access.userName);
  });
}
