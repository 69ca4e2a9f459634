import { modelConsistencyIssues, type ExchangeHypothesis, type ExchangeModel, type HypothesisEffect } from '@shared/schemas/exchange';
import { FitInputError } from './errors';

/**
 * The model of one signal hypothesis (shared/schemas/exchange.ts, version 2; docs/fit-engine.md,
 * "Scan over signal hypotheses"): the model's own templates and effects with the hypothesis's in
 * place, as a plain model any fit accepts.
 */

const pairKey = (region: string, process: string) => `${region}\u0000${process}`;

/** The signal hypotheses of a model, or FitInputError when it declares none. */
export function declaredHypotheses(model: ExchangeModel): NonNullable<ExchangeModel['signalHypotheses']> {
  if (!model.signalHypotheses || model.signalHypotheses.points.length === 0) {
    throw new FitInputError(
      `the model declares no signal hypotheses: a scan needs exchange file version 2 with signalHypotheses (the parameter they differ in and, per hypothesis, its signal templates)${model.version === 1 ? '; this file is version 1' : ''}`,
      ['signalHypotheses'],
    );
  }
  return model.signalHypotheses;
}

/**
 * The hypotheses' own consistency with the model (shared/schemas/exchange.ts checks it on import;
 * a model built in code is checked here), as FitInputError naming the hypothesis and the field.
 */
export function checkHypotheses(model: ExchangeModel): void {
  const points = declaredHypotheses(model).points;
  // the hypotheses' issues do not depend on the data, which are left out (an expected scan never reads the signal regions' counts)
  const regions = model.regions.map((r) => ({ key: r.key, role: r.role, observable: r.observable, edges: r.edges }));
  const issue = modelConsistencyIssues({ ...model, regions }).find((i) => i.path[0] === 'signalHypotheses');
  if (!issue) return;
  const point = issue.path[1] === 'points' && typeof issue.path[2] === 'number' ? points[issue.path[2]] : undefined;
  throw new FitInputError(`${point ? `signal hypothesis "${point.key}"` : 'the signal hypotheses'}: ${issue.message}`, issue.path);
}

/**
 * The plain model of one hypothesis (no signalHypotheses field). Its templates replace the
 * model's for the same (region, signal process) pairs; on a replaced pair the model's scale
 * effects stay unless the hypothesis gives an effect of the same systematic and kind there
 * (which replaces it), and the model's shape effects are replaced by the hypothesis's (the
 * schema requires it to give each); an effect the hypothesis gives that the model does not have
 * is added to its systematic. Every other template and effect stays as it is.
 */
export function hypothesisModel(model: ExchangeModel, key: string): ExchangeModel {
  const { points } = declaredHypotheses(model);
  const point = points.find((p) => p.key === key);
  if (!point) {
    const known = points.slice(0, 10).map((p) => `"${p.key}"`);
    throw new FitInputError(`unknown signal hypothesis "${key}": the model's hypotheses are ${known.join(', ')}${points.length > 10 ? ', …' : ''}`, ['signalHypotheses', 'points']);
  }
  checkHypotheses(model);
  return plainModel(model, point);
}

export function plainModel(model: ExchangeModel, point: ExchangeHypothesis): ExchangeModel {
  const replaced = new Map(point.templates.map((t) => [pairKey(t.region, t.process), t]));
  const templates = model.templates.map((t) => {
    const own = replaced.get(pairKey(t.region, t.process));
    return own ? { region: t.region, process: t.process, nominal: own.nominal, ...(own.variance ? { variance: own.variance } : {}) } : t;
  });
  const given = new Map<string, HypothesisEffect[]>();
  for (const e of point.effects) given.set(e.systematic, [...(given.get(e.systematic) ?? []), e]);
  const plain = (e: HypothesisEffect) => (e.kind === 'scale' ? { region: e.region, process: e.process, kind: e.kind, up: e.up, down: e.down } : { region: e.region, process: e.process, kind: e.kind, up: e.up, down: e.down });
  const systematics = model.systematics.map((s) => {
    const own = given.get(s.key) ?? [];
    if (own.length === 0 && !s.effects.some((e) => replaced.has(pairKey(e.region, e.process)))) return s;
    const used = new Set<HypothesisEffect>();
    const effects: ExchangeModel['systematics'][number]['effects'] = [];
    for (const e of s.effects) {
      const pair = pairKey(e.region, e.process);
      if (!replaced.has(pair)) {
        effects.push(e);
        continue;
      }
      const mine = own.find((h) => h.kind === e.kind && pairKey(h.region, h.process) === pair);
      if (mine) {
        effects.push(plain(mine));
        used.add(mine);
      } else if (e.kind === 'scale') effects.push(e);
      // a shape effect of the model on a replaced template, not given by the hypothesis: refused by checkHypotheses
    }
    for (const h of own) if (!used.has(h)) effects.push(plain(h));
    return { ...s, effects };
  });
  const { signalHypotheses: _, ...rest } = model;
  return { ...rest, templates, systematics };
}

/**
 * The model with the signal regions' observed counts left out, for expected numbers that must not
 * depend on them: each signal region is rebuilt from its other fields, so the counts are never read.
 */
export function withoutSignalData(model: ExchangeModel): ExchangeModel {
  const regions = model.regions.map((r) =>
    r.role === 'signal' ? { key: r.key, ...(r.label === undefined ? {} : { label: r.label }), role: r.role, observable: r.observable, edges: r.edges } : r,
  );
  return { ...model, regions };
}
