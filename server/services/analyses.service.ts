import { and, count, desc, eq } from 'drizzle-orm';
import { allowedActions } from '@shared/permissions';
import { createAnalysisSchema, type AnalysisOverview, type AnalysisSummary, type EntryState } from '@shared/schemas/api';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { insertAnalysis, listAnalysesFor } from '../db/analyses.repository';
import { analyses, entries, fits, memberships, modelVersions, processes, questions, regions } from '../db/schema';
import { conflict } from '../errors';

export async function listAnalyses(ctx: AppContext, user: Express.User): Promise<AnalysisSummary[]> {
  const rows = await listAnalysesFor(ctx.db, user.id, user.isAdmin);
  return rows.map(({ analysis: a, role, entries, members }) => ({
    slug: a.slug,
    name: a.name,
    description: a.description,
    blinding: a.blinding,
    role: role ?? null,
    entries,
    members,
  }));
}

export async function createAnalysis(ctx: AppContext, body: unknown): Promise<AnalysisSummary> {
  const input = createAnalysisSchema.parse(body);
  const [existing] = await ctx.db.select({ id: analyses.id }).from(analyses).where(eq(analyses.slug, input.slug));
  if (existing) throw conflict(`An analysis with the short name "${input.slug}" already exists; choose another.`);
  const a = await insertAnalysis(ctx.db, {
    slug: input.slug,
    name: input.name,
    description: input.description,
    blinding: input.blinded ? 'blinded' : 'unblinded',
  });
  return { slug: a.slug, name: a.name, description: a.description, blinding: a.blinding, role: null, entries: 0, members: 0 };
}

const countOf = async (ctx: AppContext, table: typeof regions | typeof processes | typeof memberships, analysisId: number) =>
  (await ctx.db.select({ n: count() }).from(table).where(eq(table.analysisId, analysisId)))[0].n;

export async function getOverview(ctx: AppContext, access: Access): Promise<AnalysisOverview> {
  const a = access.analysis;
  const byState = await ctx.db
    .select({ state: entries.state, n: count() })
    .from(entries)
    .where(eq(entries.analysisId, a.id))
    .groupBy(entries.state);
  const entriesByState: Record<EntryState, number> = { draft: 0, submitted: 0, accepted: 0, sent_back: 0, retired: 0 };
  byState.forEach((r) => (entriesByState[r.state] = r.n));
  const [version] = await ctx.db
    .select({ number: modelVersions.number, createdAt: modelVersions.createdAt, note: modelVersions.note })
    .from(modelVersions)
    .where(eq(modelVersions.analysisId, a.id))
    .orderBy(desc(modelVersions.number))
    .limit(1);
  const [fit] = await ctx.db.select({ id: fits.id, state: fits.state, label: fits.label, createdAt: fits.createdAt }).from(fits).where(eq(fits.analysisId, a.id)).orderBy(desc(fits.id)).limit(1);
  const [open] = await ctx.db
    .select({ n: count() })
    .from(questions)
    .where(and(eq(questions.analysisId, a.id), eq(questions.state, 'open')));
  return {
    analysis: {
      slug: a.slug,
      name: a.name,
      description: a.description,
      blinding: a.blinding,
      signalStrength: { start: a.muStart, min: a.muMin, max: a.muMax },
      overConstraintThreshold: a.overConstraintThreshold,
      createdAt: a.createdAt.toISOString(),
    },
    role: access.role,
    permissions: allowedActions(access.role, access.isAdmin),
    counts: {
      regions: await countOf(ctx, regions, a.id),
      processes: await countOf(ctx, processes, a.id),
      members: await countOf(ctx, memberships, a.id),
      entries: Object.values(entriesByState).reduce((s, n) => s + n, 0),
      entriesByState,
    },
    modelVersion: version ? { number: version.number, createdAt: version.createdAt.toISOString(), note: version.note } : null,
    latestFit: fit ? { id: fit.id, state: fit.state, label: fit.label, createdAt: fit.createdAt.toISOString() } : null,
    openQuestions: open.n,
  };
}
