import { allowedActions } from '@shared/permissions';
import { createAnalysisSchema, plotLabelsSchema, type AnalysisOverview, type PlotLabels, type AnalysisSummary, type EntryState } from '@shared/schemas/api';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { analysisBySlug, insertAnalysis, listAnalysesFor, overviewFacts } from '../db/analyses.repository';
import { conflict } from '../errors';
import { updatePlotLabels } from '../db/pack.repository';

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
  if (await analysisBySlug(ctx.db, input.slug)) throw conflict(`An analysis with the short name "${input.slug}" already exists; choose another.`);
  const a = await insertAnalysis(ctx.db, {
    slug: input.slug,
    name: input.name,
    description: input.description,
    blinding: input.blinded ? 'blinded' : 'unblinded',
  });
  return { slug: a.slug, name: a.name, description: a.description, blinding: a.blinding, role: null, entries: 0, members: 0 };
}

export async function getOverview(ctx: AppContext, access: Access): Promise<AnalysisOverview> {
  const a = access.analysis;
  const facts = await overviewFacts(ctx.db, a.id);
  const entriesByState: Record<EntryState, number> = { draft: 0, submitted: 0, accepted: 0, sent_back: 0, retired: 0 };
  facts.byState.forEach((r) => (entriesByState[r.state] = r.n));
  const { version, fit } = facts;
  return {
    analysis: {
      slug: a.slug,
      name: a.name,
      description: a.description,
      blinding: a.blinding,
      signalStrength: { start: a.muStart, min: a.muMin, max: a.muMax },
      overConstraintThreshold: a.overConstraintThreshold,
      createdAt: a.createdAt.toISOString(),
      plotLabels: plotLabelsOf(a),
    },
    role: access.role,
    permissions: allowedActions(access.role, access.isAdmin),
    counts: {
      regions: facts.regions,
      processes: facts.processes,
      members: facts.members,
      entries: Object.values(entriesByState).reduce((s, n) => s + n, 0),
      entriesByState,
    },
    modelVersion: version ? { number: version.number, createdAt: version.createdAt.toISOString(), note: version.note } : null,
    latestFit: fit ? { id: fit.id, state: fit.state, label: fit.label, createdAt: fit.createdAt.toISOString() } : null,
    openQuestions: facts.openQuestions,
  };
}

/** The plot labels as stored, each field present (a row written before they existed has the defaults). */
export const plotLabelsOf = (a: { plotLabels: Partial<PlotLabels> | null }): PlotLabels => ({ experiment: '', status: '', luminosity: '', energy: '', ...(a.plotLabels ?? {}) });

/** A convener sets the labels every chart carries: each a short text on one line; a bad field → 400 naming it, nothing saved. */
export async function setPlotLabels(ctx: AppContext, access: Access, body: unknown): Promise<PlotLabels> {
  const labels = plotLabelsSchema.parse(body);
  await updatePlotLabels(ctx.db, access.analysis.id, labels);
  return labels;
}
