import type { ExchangeModel } from '@shared/schemas/exchange';
import { fitOptionsSchema, type FitOptionsInput, type FitResult } from '@shared/schemas/fit';
import { curvatureAt } from './covariance';
import { FitInputError } from './errors';
import { Refitter } from './refit-tasks';
import { createScratch, minimise } from './minimiser';
import { errorOf, nuisanceTable, parameterTable } from './parameters-report';
import { buildProblem, startPoint } from './problem';
import { applyHeld, resolveHeld, variantModel } from './variants';

/**
 * What a change of the model does to a stored fit, without storing anything: the same options on
 * the changed model, warm-started from the stored fit's values (by name), then μ̂, σ_μ, every
 * pull and constraint, and for the parameters in focus their post-fit impacts (θ̂ ± σ̂, all else
 * refitted) and their rank among the stored fit's post-fit impacts of the others. For an upload
 * (the new effects of one entry) and for pruning (effects left out) before anyone commits to it.
 */
export type WhatIfInput = {
  model: ExchangeModel;
  options: FitOptionsInput;
  /** the stored fit this is compared with: its parameters and nuisance reports */
  reference: Pick<FitResult, 'parameters' | 'nuisance'>;
  focus: string[];
};

type Change = { before: number | null; after: number | null };

export type WhatIfOutcome = {
  failure: string | null;
  mu: { before: number | null; after: number | null; fixed: boolean };
  muError: { before: number | null; after: number | null };
  parameters: { name: string; pull: { before: number | null; after: number | null }; constraint: { before: number | null; after: number | null } }[];
  focus: { name: string; pull: Change; constraint: Change; impact: { up: number | null; down: number | null } | null; rankBefore: number | null; rankAfter: number | null }[];
  /** what the refit's convergence report would say beside its numbers: clip edges, parameters at a bound, refits that did not converge */
  warnings: string[];
  seconds: number;
};

const size = (i: { up: number | null; down: number | null } | null) => (i ? Math.max(Math.abs(i.up ?? 0), Math.abs(i.down ?? 0)) : null);

export function whatIf(input: WhatIfInput): WhatIfOutcome {
  const started = performance.now();
  const options = fitOptionsSchema.parse(input.options);
  const variant = variantModel(input.model, options);
  let problem = buildProblem(variant.model, options);
  const m = problem.model;
  const ref = new Map(input.reference.parameters.map((p) => [p.name, p]));
  const start = startPoint(m);
  // warm: every parameter the stored fit knew starts where it ended
  m.names.forEach((name, i) => {
    const p = ref.get(name);
    if (p && !problem.held[i]) start.phi[i] = Math.min(m.upper[i], Math.max(m.lower[i], p.value));
  });
  const scratch = createScratch(problem);
  if (options.hold.length || options.holdGroups.length || options.statOnly) {
    // values held at "best" are the stored fit's
    const best = Float64Array.from(start.phi);
    problem = applyHeld(problem, resolveHeld(m, problem, options, best), start.phi, options.statOnly);
  }
  const refMu = ref.get('mu');
  const before = { mu: refMu?.value ?? null, muError: refMu?.error ?? null };
  const empty = (failure: string): WhatIfOutcome => ({
    failure,
    mu: { before: before.mu, after: null, fixed: !!refMu?.fixed },
    muError: { before: before.muError, after: null },
    parameters: [],
    focus: [],
    warnings: [],
    seconds: (performance.now() - started) / 1000,
  });
  const min = minimise(problem, start.phi, start.gamma, scratch, {});
  if (min.status === 'failed' || min.status === 'cancelled') return empty(`the fit of the changed model did not converge: ${min.message ?? min.status}`);
  const curvature = curvatureAt(problem, min.phi, min.gamma, scratch);
  if (!curvature.ok) return empty(`the changed model's covariance is not available: ${curvature.message}`);
  const ctx = curvature.context;
  const warnings: string[] = [];
  if (min.edge) warnings.push(min.edge.kept === 'released' ? 'The refit met a clip edge; the minimum off the edge is kept.' : 'The refit\u2019s minimum sits on a clip edge (a template\u2019s yield at zero in some bin): it is held there.');
  if (min.message) warnings.push(`Newton: ${min.message}.`);
  const rows = nuisanceTable(ctx, options.overConstraintThreshold);
  const atBound = parameterTable(ctx).filter((p) => p.atBound).map((p) => p.name);
  if (atBound.length) warnings.push(`At a bound of its range in the refit: ${atBound.slice(0, 10).join(', ')}${atBound.length > 10 ? ', …' : ''}.`);
  const after = new Map(rows.map((r) => [r.name, r]));
  const stored = new Map(input.reference.nuisance.map((n) => [n.name, n]));
  const names = [...new Set([...stored.keys(), ...after.keys()])];
  const parameters = names.map((name) => {
    const b = stored.get(name);
    const a = after.get(name);
    return { name, pull: { before: b?.pull ?? null, after: a?.pull ?? null }, constraint: { before: b?.constraint ?? null, after: a?.constraint ?? null } };
  });

  const muFree = !problem.held[0];
  const runner = new Refitter([ctx]);
  const focus = input.focus.map((name) => {
    const index = m.names.indexOf(name);
    if (index < m.thetaStart) throw new FitInputError(`"${name}" is not a nuisance parameter of the changed model`, ['focus']);
    const rankBefore = stored.get(name)?.rank ?? null;
    const { pull, constraint } = parameters.find((p) => p.name === name)!;
    const sigma = errorOf(ctx, index);
    if (!muFree || sigma === null) return { name, pull, constraint, impact: null, rankBefore, rankAfter: null };
    const clip = (v: number) => Math.min(m.upper[index], Math.max(m.lower[index], v));
    const shift = (v: number) => {
      const r = runner.run({ kind: 'fix', context: 0, index, value: clip(v) });
      if (!r.ok || r.mu === null) warnings.push(`The impact of ${name} at θ = ${clip(v).toFixed(3)} is left empty: its conditional fit did not converge${r.message ? ` (${r.message})` : ''}.`);
      return r.ok && r.mu !== null ? r.mu - ctx.phi[0] : null;
    };
    const impact = { up: shift(ctx.phi[index] + sigma), down: shift(ctx.phi[index] - sigma) };
    // its place among the stored fit's post-fit impacts of every other parameter
    const mine = size(impact)!;
    const others = input.reference.nuisance.filter((n) => n.name !== name && !n.fixed).map((n) => size(n.postfitImpact) ?? (n.quickImpact === null ? null : Math.abs(n.quickImpact)));
    const rankAfter = 1 + others.filter((x) => x !== null && x > mine).length;
    return { name, pull, constraint, impact, rankBefore, rankAfter };
  });
  return {
    failure: null,
    mu: { before: before.mu, after: ctx.phi[0], fixed: !muFree },
    muError: { before: before.muError, after: errorOf(ctx, 0) },
    parameters,
    focus,
    warnings,
    seconds: (performance.now() - started) / 1000,
  };
}
