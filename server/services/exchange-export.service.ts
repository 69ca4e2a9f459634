import { EXCHANGE_FORMAT, EXCHANGE_VERSION, type ExchangeModel } from '@shared/schemas/exchange';
import type { AnalysisRow } from '../db/analyses.repository';
import type { DbOrTx } from '../db/revisions.repository';
import { indexModel, loadModelRows } from '../db/model.repository';
import { effectsOfAnalysis, exportedEntries } from '../db/exchange.repository';
import { exchangeHypothesis, hypothesesOf } from '../db/signal-hypotheses.repository';
import { isWithheld } from './blinding.service';
import { pruneModel, type PrunedEffect } from '../variations/pruning';

/**
 * The whole model of an analysis as an exchange document: the inverse of importModel, so an
 * export of an import gives back the same document. Retired entries are left out (they are not
 * part of the fit), with the signal hypotheses' effects of them, and so are pruned effects, or a
 * pruned shape keeps only its normalisation, on the model's templates and the hypotheses' alike
 * (variations/pruning.ts): the document is the model as a fit sees it. Parameters of interest
 * besides μ are written only when the model declares some (a model without them exports as
 * before), in the order they were declared. The signal hypotheses
 * come in the order of their value. With `withhold`, blinded signal-region data are omitted: every export that
 * leaves the server sets it; a frozen model version, which stays on the server, does not.
 */
export async function buildExchange(db: DbOrTx, analysis: AnalysisRow, opts: { withhold: boolean }): Promise<ExchangeModel> {
  const model = indexModel(await loadModelRows(db, analysis.id));
  const { rows } = model;
  const label = (l: string, fallback = '') => (l && l !== fallback ? { label: l } : {});

  const entryRows = await exportedEntries(db, analysis.id);
  const effectRows = entryRows.length ? await effectsOfAnalysis(db, analysis.id) : [];
  const hypothesisRows = await hypothesesOf(db, analysis.id);
  const exported = new Set(entryRows.map(({ entry }) => entry.key));
  const effectsByEntry = new Map<number, typeof effectRows>();
  for (const row of effectRows) {
    const list = effectsByEntry.get(row.effects.entryId);
    if (list) list.push(row);
    else effectsByEntry.set(row.effects.entryId, [row]);
  }

  const normTargets = new Map<number, { region: string; process: string }[]>();
  for (const t of rows.templates)
    if (t.floatingNormId)
      normTargets.set(t.floatingNormId, [...(normTargets.get(t.floatingNormId) ?? []), { region: model.regionById.get(t.regionId)!.key, process: model.processById.get(t.processId)!.key }]);

  const pruned: PrunedEffect[] = effectRows
    .filter(({ effects: e }) => e.pruned)
    .map(({ effects: e, entries: en }) => ({
      systematic: en.key,
      region: model.regionById.get(e.regionId)!.key,
      process: model.processById.get(e.processId)!.key,
      kind: e.kind,
      as: e.prunedToScale ? 'normalisation' : 'dropped',
    }));

  return pruneModel({
    format: EXCHANGE_FORMAT,
    version: EXCHANGE_VERSION,
    name: analysis.name,
    signalStrength: { start: analysis.muStart, min: analysis.muMin, max: analysis.muMax },
    regions: rows.regions.map((r) => ({
      key: r.key,
      ...label(r.label),
      role: r.role,
      observable: { name: r.observable, unit: r.unit },
      edges: r.edges,
      ...(r.observed && !(opts.withhold && isWithheld(analysis, r)) ? { observed: r.observed } : {}),
    })),
    processes: rows.processes.map((p) => ({ key: p.key, ...label(p.label), kind: p.kind, ...(p.colour ? { colour: p.colour } : {}) })),
    floatingNorms: rows.floatingNorms
      .filter((f) => normTargets.has(f.id))
      .map((f) => ({ key: f.key, ...label(f.label), start: f.start, min: f.min, max: f.max, targets: normTargets.get(f.id)! })),
    ...(rows.parametersOfInterest.length
      ? { parametersOfInterest: rows.parametersOfInterest.map((q) => ({ key: q.key, ...label(q.label), start: q.start, min: q.min, max: q.max, targets: q.targets })) }
      : {}),
    templates: rows.templates.map((t) => ({
      region: model.regionById.get(t.regionId)!.key,
      process: model.processById.get(t.processId)!.key,
      nominal: t.nominal,
      ...(t.variance ? { variance: t.variance } : {}),
    })),
    systematics: entryRows.map(({ entry, group }) => ({
      key: entry.key,
      ...label(entry.label, entry.key),
      ...(group ? { group } : {}),
      ...(entry.description ? { description: entry.description } : {}),
      effects: (effectsByEntry.get(entry.id) ?? []).map(({ effects: e }) => {
          const where = { region: model.regionById.get(e.regionId)!.key, process: model.processById.get(e.processId)!.key };
          return e.kind === 'scale'
            ? { ...where, kind: 'scale' as const, up: e.up as number, down: e.down as number }
            : { ...where, kind: 'shape' as const, up: e.up as number[], down: e.down as number[] };
        }),
    })),
    ...(hypothesisRows.length
      ? {
          signalHypotheses: {
            parameter: analysis.hypothesisParameter ?? { name: 'hypothesis', unit: '' },
            points: hypothesisRows.map(exchangeHypothesis).map((h) => ({ ...h, effects: h.effects.filter((e) => exported.has(e.systematic)) })),
          },
        }
      : {}),
  }, pruned);
}
