import { untilModelChanges } from '../cache/change-notices';
import type { Model, Process, Region } from '@shared/schemas/api';
import type { Access } from '../auth/authorize';
import type { AppContext } from '../context';
import { cachedModelRows, type ModelRows } from '../db/model.repository';
import { encodeJson, type Encoded } from '../cache/encoded-json';
import { isWithheld, visibleObserved } from './blinding.service';

/** A region as clients see it: its observed counts go through the blinding rule. */
export const regionView = (access: Access, r: ModelRows['regions'][number]): Region => ({
  key: r.key,
  label: r.label,
  role: r.role,
  observable: r.observable,
  unit: r.unit,
  edges: r.edges,
  observed: visibleObserved(access.analysis, r),
  withheld: isWithheld(access.analysis, r),
});
export const processView = (p: ModelRows['processes'][number]): Process => ({ key: p.key, label: p.label, kind: p.kind, colour: p.colour });

export async function getModel(ctx: AppContext, access: Access): Promise<Model> {
  const rows = await cachedModelRows(ctx, access.analysis.id);
  const regionKey = new Map(rows.regions.map((r) => [r.id, r.key]));
  const processKey = new Map(rows.processes.map((p) => [p.id, p.key]));
  const normKey = new Map(rows.floatingNorms.map((f) => [f.id, f.key]));
  return {
    regions: rows.regions.map((r) => regionView(access, r)),
    processes: rows.processes.map(processView),
    floatingNorms: rows.floatingNorms.map((f) => ({ key: f.key, label: f.label, start: f.start, min: f.min, max: f.max })),
    parametersOfInterest: rows.parametersOfInterest.map((q) => ({ key: q.key, label: q.label, start: q.start, min: q.min, max: q.max, targets: q.targets })),
    templates: rows.templates.map((t) => ({
      region: regionKey.get(t.regionId)!,
      process: processKey.get(t.processId)!,
      nominal: t.nominal,
      variance: t.variance,
      floatingNorm: t.floatingNormId ? normKey.get(t.floatingNormId)! : null,
    })),
  };
}

/**
 * The model's response bytes, encoded once per change of the model and per blinding rule (whether
 * signal-region counts are withheld), and shared by every reader until the model changes.
 */
export function getModelEncoded(ctx: AppContext, access: Access): Promise<Encoded> {
  const rule = access.analysis.blinding === 'unblinded' ? 'open' : `blind(${access.analysis.blindedRegions.join(',')})`;
  return untilModelChanges(ctx.client, access.analysis.id, `model response (${rule})`, async () => encodeJson(await getModel(ctx, access), 'until-changed'));
}
