import type { ExchangeModel, ExchangeSystematic } from '@shared/schemas/exchange';
import type { FitOptions, FitResult } from '@shared/schemas/fit';
import type { DecorrelationReport, HeldParameter } from '@shared/schemas/variants';
import { cholesky, choleskySolve } from './cholesky';
import type { CompiledModel, FitProblem } from './compiled-model';
import { chiSquareSurvival } from './distributions';
import { FitInputError } from './errors';

/**
 * Fit variants (docs/likelihood.md §9) that change the model or what is held. Each is plain
 * data in, plain data out; fit.ts applies them around the one fit path, so every output of a
 * variant is computed as for the nominal fit.
 */

/** The name of part `where` of a decorrelated systematic. */
export const partName = (parameter: string, where: string) => `${parameter}/${where}`;

export type DecorrelationPlan = { parameter: string; by: 'region' | 'process'; parts: { name: string; where: string }[] };

/**
 * §9.3 and §9.4 as a change of the model before it is compiled: without template statistics the
 * variances are dropped (γ ≡ 1); a decorrelated systematic j becomes one systematic per region
 * (or process) in which it has an effect, each with j's effects there and its own unit constraint.
 */
export function variantModel(model: ExchangeModel, options: Pick<FitOptions, 'templateStats' | 'decorrelate'>): { model: ExchangeModel; decorrelation: DecorrelationPlan[] } {
  let out = model;
  if (!options.templateStats) out = { ...out, templates: out.templates.map(({ variance: _v, ...t }) => t) };
  const decorrelation: DecorrelationPlan[] = [];
  if (options.decorrelate.length) {
    const split = new Map(options.decorrelate.map((d, i) => [d.parameter, { ...d, i }]));
    const seen = new Set<string>();
    const systematics: ExchangeSystematic[] = [];
    for (const s of out.systematics) {
      const d = split.get(s.key);
      if (!d) {
        systematics.push(s);
        continue;
      }
      if (seen.has(s.key)) throw new FitInputError(`"${s.key}" is decorrelated twice`, ['decorrelate', d.i, 'parameter']);
      seen.add(s.key);
      const places = [...new Set(s.effects.map((e) => (d.by === 'region' ? e.region : e.process)))];
      const parts = places.map((where) => ({ name: partName(s.key, where), where }));
      for (const p of parts)
        systematics.push({
          ...s,
          key: p.name,
          label: `${s.label ?? s.key} (${p.where})`,
          effects: s.effects.filter((e) => (d.by === 'region' ? e.region : e.process) === p.where),
        });
      decorrelation.push({ parameter: s.key, by: d.by, parts });
    }
    options.decorrelate.forEach((d, i) => {
      if (!seen.has(d.parameter)) throw new FitInputError(`there is no systematic "${d.parameter}" to decorrelate`, ['decorrelate', i, 'parameter']);
    });
    out = { ...out, systematics };
  }
  return { model: out, decorrelation };
}

/** Whether the variant needs the unconditional best fit first (a parameter held at `best`). */
export const needsBestFit = (o: Pick<FitOptions, 'hold' | 'holdGroups' | 'statOnly'>) => o.statOnly || o.holdGroups.length > 0 || o.hold.some((h) => h.value === 'best');

export type HeldValue = { index: number; value: number; asked: HeldParameter['value'] };

/**
 * §9.1 and §9.2: which dense parameters the variant holds, and at what value (`best` = the
 * unconditional fit to the same data). Unknown names or groups are contract breaks, named by
 * their path in the options; a value outside the parameter's range too.
 */
export function resolveHeld(m: CompiledModel, problem: FitProblem, options: Pick<FitOptions, 'hold' | 'holdGroups' | 'statOnly'>, best: Float64Array | null): HeldValue[] {
  const held = new Map<number, HeldValue>();
  const at = (index: number, asked: HeldParameter['value']) => ({ index, asked, value: asked === 'best' ? best![index] : asked });
  options.hold.forEach((h, i) => {
    const index = m.names.indexOf(h.parameter);
    if (index < 0) throw new FitInputError(`there is no parameter "${h.parameter}" to hold (μ is "${m.names[0]}")`, ['hold', i, 'parameter']);
    if (typeof h.value === 'number' && (h.value < m.lower[index] || h.value > m.upper[index]))
      throw new FitInputError(`${h.parameter} may be held only within its range [${m.lower[index]}, ${m.upper[index]}]`, ['hold', i, 'value']);
    held.set(index, at(index, h.value));
  });
  options.holdGroups.forEach((g, i) => {
    const members = m.groups.map((group, index) => (group === g && index >= m.thetaStart ? index : -1)).filter((index) => index >= 0);
    if (!members.length) throw new FitInputError(`there is no group "${g}" of systematics to hold`, ['holdGroups', i]);
    for (const index of members) if (!held.has(index)) held.set(index, at(index, 'best'));
  });
  if (options.statOnly) for (let index = m.thetaStart; index < m.nDense; index++) if (!held.has(index)) held.set(index, at(index, 'best'));
  const list = [...held.values()];
  const free = Array.from({ length: m.nDense }, (_, i) => i).filter((i) => !problem.held[i] && !held.has(i));
  if (!free.length) throw new FitInputError('every parameter is held: nothing is left to fit', ['hold']);
  return list;
}

/** Holds the resolved parameters in the problem, at their values in φ (and every γ at its value in γ, for statistics only). */
export function applyHeld(problem: FitProblem, held: HeldValue[], phi: Float64Array, holdGammas: boolean): FitProblem {
  const h = Uint8Array.from(problem.held);
  for (const { index, value } of held) {
    h[index] = 1;
    phi[index] = value;
  }
  const gammaHeld = holdGammas ? new Uint8Array(problem.gammaHeld.length).fill(1) : problem.gammaHeld;
  return { ...problem, held: h, gammaHeld };
}

/**
 * §9.4, the consistency of the parts of a decorrelated systematic: with t the parts' best fits
 * and W their block of V, the weighted average with correlations t̄ = (1ᵀW⁻¹t)/(1ᵀW⁻¹1) and
 * χ² = (t − t̄1)ᵀW⁻¹(t − t̄1) with parts − 1 degrees of freedom (Lyons, Gibaut, Clifford, Nucl.
 * Instrum. Meth. A 270 (1988) 110). Parts held (no bin in the fit depends on them) are left out.
 */
export function decorrelationReports(m: CompiledModel, held: Uint8Array, phi: Float64Array, V: Float64Array, plans: DecorrelationPlan[]): DecorrelationReport[] {
  const P = m.nDense;
  return plans.map((plan) => {
    const parts = plan.parts.map((p) => {
      const index = m.names.indexOf(p.name);
      const free = index >= 0 && !held[index];
      return { ...p, index, free, value: index >= 0 ? phi[index] : 0, error: free ? Math.sqrt(Math.max(0, V[index * P + index])) : null };
    });
    const used = parts.filter((p) => p.free);
    const k = used.length;
    const report = { parameter: plan.parameter, by: plan.by, parts: parts.map(({ name, where, value, error }) => ({ name, where, value, error })), dof: Math.max(0, k - 1) };
    if (k < 2) return { ...report, average: k === 1 ? used[0].value : null, chi2: null, p: null };
    const W = new Float64Array(k * k);
    for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) W[a * k + b] = V[used[a].index * P + used[b].index];
    const { L, failedAt } = cholesky(W, k);
    if (failedAt >= 0) return { ...report, average: null, chi2: null, p: null };
    const t = Float64Array.from(used.map((p) => p.value));
    const winvT = Float64Array.from(t);
    choleskySolve(L, k, winvT);
    const winv1 = new Float64Array(k).fill(1);
    choleskySolve(L, k, winv1);
    const sum = (x: Float64Array) => x.reduce((s, v) => s + v, 0);
    const average = sum(winvT) / sum(winv1);
    const r = Float64Array.from(t, (v) => v - average);
    const winvR = Float64Array.from(r);
    choleskySolve(L, k, winvR);
    const chi2 = r.reduce((s, v, a) => s + v * winvR[a], 0);
    return { ...report, average, chi2, p: chiSquareSurvival(chi2, k - 1) };
  });
}

/**
 * §9.7: σ_G± = √(σ±² − σ±(G held)²), from the q = 1 crossings of the nominal fit and of the fit
 * with G held at its best; 0 and flagged where the difference is negative.
 */
export function frozenShare(nominal: { low: number | null; high: number | null }, held: { low: number | null; high: number | null }) {
  const part = (a: number | null, b: number | null) => (a === null || b === null ? null : a * a - b * b);
  const up = part(nominal.high, held.high);
  const down = part(nominal.low, held.low);
  const flagged = (up !== null && up < 0) || (down !== null && down < 0);
  return { up: up === null ? null : Math.sqrt(Math.max(0, up)), down: down === null ? null : Math.sqrt(Math.max(0, down)), flagged };
}

/**
 * §9.6: what a fit with μ hidden may keep. Nothing computed from μ̂ or from signal-region data
 * stays: μ̂, σ_μ and the summary, the μ row of the correlations, every impact on μ and the
 * ranking, the grouped impacts, the scan, the γ, information and post-fit yields of signal
 * regions, the data of signal regions, the NLL, and every parameter of interest besides μ with
 * them (their rows, the poi section, their contour). Pulls, constraints, the γ of control regions,
 * the correlations among k and θ and the control regions' post-fit yields stay.
 */
export function hideMu(result: FitResult): FitResult {
  const signal = new Set(result.yields.prefit.filter((r) => r.role === 'signal').map((r) => r.region));
  const mu = result.parameters.find((p) => p.kind === 'poi')?.name;
  const pois = new Set(result.parameters.filter((p) => p.kind === 'poi').map((p) => p.name));
  const correlation = result.correlation && mu ? [...pois].reduce(withoutRow, result.correlation) : result.correlation;
  const { poi: _poi, contour: _contour, ...kept } = result;
  return {
    ...kept,
    convergence: { ...result.convergence, nll: null },
    parameters: result.parameters.filter((p) => p.kind !== 'poi'),
    nuisance: result.nuisance.map((n) => ({ ...n, quickImpact: null, postfitImpact: null, prefitImpact: null, rank: null })),
    gammas: { ...result.gammas, list: result.gammas.list.filter((g) => !signal.has(g.region)), maxAbsPull: null },
    correlation,
    summary: null,
    groupedImpacts: [],
    scan: null,
    // the μ row of the information is gone with μ
    information: result.information.filter((i) => !pois.has(i.parameter)).map((i) => {
      const regions = i.regions.filter((r) => !signal.has(r.region));
      const total = i.constraint + regions.reduce((s, r) => s + r.information, 0);
      return { ...i, regions, total, width: 1 / Math.sqrt(total) };
    }),
    yields: { prefit: result.yields.prefit, postfit: result.yields.postfit?.filter((r) => !signal.has(r.region)) ?? null },
    data: { ...result.data, regions: result.data.regions.map((r) => (signal.has(r.region) ? { ...r, values: null } : r)) },
  };
}

function withoutRow(c: NonNullable<FitResult['correlation']>, name: string) {
  const n = c.names.length;
  const drop = c.names.indexOf(name);
  if (drop < 0) return c;
  const keep = c.names.map((_, i) => i).filter((i) => i !== drop);
  return { names: keep.map((i) => c.names[i]), values: keep.flatMap((i) => keep.map((j) => c.values[i * n + j])) };
}

/**
 * What is wrong with a variant's options for this model, each with its path in the options, so
 * that a request can be refused before anything is stored: a parameter, group or systematic that
 * does not exist, a held value outside its range, and every parameter held.
 */
export function variantIssues(model: ExchangeModel, options: Pick<FitOptions, 'hold' | 'holdGroups' | 'statOnly' | 'decorrelate' | 'controlOnly'>): { path: (string | number)[]; message: string }[] {
  const issues: { path: (string | number)[]; message: string }[] = [];
  const ranges = new Map<string, [number, number]>([['mu', [model.signalStrength.min, model.signalStrength.max]]]);
  for (const f of model.floatingNorms) ranges.set(f.key, [f.min, f.max]);
  for (const q of model.parametersOfInterest ?? []) ranges.set(q.key, [q.min, q.max]);
  for (const s of model.systematics) ranges.set(s.key, [-5, 5]);
  const systematics = new Set(model.systematics.map((s) => s.key));
  const groups = new Set(model.systematics.map((s) => s.group).filter((g): g is string => !!g));
  const held = new Set<string>();
  options.hold.forEach((h, i) => {
    const range = ranges.get(h.parameter);
    if (!range) issues.push({ path: ['hold', i, 'parameter'], message: `there is no parameter "${h.parameter}" (μ is "mu"; floating normalisations and systematics by their keys)` });
    else if (typeof h.value === 'number' && (h.value < range[0] || h.value > range[1])) issues.push({ path: ['hold', i, 'value'], message: `must lie within ${h.parameter}'s range [${range[0]}, ${range[1]}]` });
    else held.add(h.parameter);
  });
  options.holdGroups.forEach((g, i) => {
    if (!groups.has(g)) issues.push({ path: ['holdGroups', i], message: `there is no group "${g}" (groups: ${[...groups].join(', ') || 'none'})` });
    else for (const s of model.systematics) if (s.group === g) held.add(s.key);
  });
  if (options.statOnly) for (const s of systematics) held.add(s);
  options.decorrelate.forEach((d, i) => {
    if (!systematics.has(d.parameter)) issues.push({ path: ['decorrelate', i, 'parameter'], message: `there is no systematic "${d.parameter}" to split` });
    else if (held.has(d.parameter)) issues.push({ path: ['decorrelate', i, 'parameter'], message: `"${d.parameter}" is held: a held parameter cannot also be split` });
  });
  if (options.controlOnly) held.add('mu');
  if (!issues.length && [...ranges.keys()].every((k) => held.has(k))) issues.push({ path: ['hold'], message: 'every parameter is held: nothing is left to fit' });
  return issues;
}
