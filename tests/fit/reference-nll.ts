import type { ExchangeModel } from '../../shared/schemas/exchange';

/**
 * The negative log-likelihood written straight from docs/likelihood.md §1–4, on the exchange
 * model itself, for the tests to hold the engine to. It shares nothing with server/fit: no
 * compiled model, no workspace, no interpolation code; parameters are looked up by name
 * (μ, each floating normalisation's key, each systematic's key) and γ by "region:bin".
 */
export interface ReferencePoint {
  mu: number;
  /** floating normalisation key → k */
  norms: Record<string, number>;
  /** systematic key → θ */
  theta: Record<string, number>;
  /** "region:bin" (bin from 0) → γ, for every bin that has one */
  gamma: Record<string, number>;
}

/** s(x) of §2: x (3x⁴ − 10x² + 15) / 8 inside ±1, sign(x) outside. */
function smoothStep(x: number): number {
  if (Math.abs(x) >= 1) return Math.sign(x);
  const x2 = x * x;
  return (x * (3 * x2 * x2 - 10 * x2 + 15)) / 8;
}

/** I(θ; a, b) = (θ/2)[(a − b) + (a + b) s(θ)] of §2. */
function interpolate(theta: number, a: number, b: number): number {
  return (theta / 2) * (a - b + (a + b) * smoothStep(theta));
}

/** The bins that carry a γ (§1): some template there has v > 0, and those templates' nominal sum is positive; with σ of §4. */
export function referenceGammas(model: ExchangeModel): Map<string, { region: string; bin: number; sigma: number }> {
  const out = new Map<string, { region: string; bin: number; sigma: number }>();
  for (const r of model.regions) {
    if (r.role === 'validation') continue;
    for (let b = 0; b < r.edges.length - 1; b++) {
      let v = 0;
      let nominal = 0;
      for (const t of model.templates)
        if (t.region === r.key && (t.variance?.[b] ?? 0) > 0) {
          v += t.variance![b];
          nominal += t.nominal[b];
        }
      if (v > 0 && nominal > 0) out.set(`${r.key}:${b}`, { region: r.key, bin: b, sigma: Math.sqrt(v) / nominal });
    }
  }
  return out;
}

/** ν_rpb of §3. */
function templateYield(model: ExchangeModel, p: ReferencePoint, region: string, process: string, bin: number, hasGamma: boolean): number {
  const t = model.templates.find((x) => x.region === region && x.process === process)!;
  let shape = t.nominal[bin];
  let scale = 1;
  for (const s of model.systematics)
    for (const e of s.effects) {
      if (e.region !== region || e.process !== process) continue;
      const theta = p.theta[s.key] ?? 0;
      if (e.kind === 'shape') shape += interpolate(theta, e.up[bin] - t.nominal[bin], e.down[bin] - t.nominal[bin]);
      else scale *= Math.exp(interpolate(theta, Math.log(e.up), Math.log(e.down)));
    }
  let nu = Math.max(0, shape) * scale;
  if (model.processes.find((x) => x.key === process)!.kind === 'signal') nu *= p.mu;
  for (const f of model.floatingNorms) if (f.targets.some((x) => x.region === region && x.process === process)) nu *= p.norms[f.key];
  if (hasGamma && (t.variance?.[bin] ?? 0) > 0) nu *= p.gamma[`${region}:${bin}`];
  return nu;
}

/** NLL of §4 with the nominal global observables (a = 0, g = 1), over the signal and control regions. */
export function referenceNll(model: ExchangeModel, p: ReferencePoint): number {
  const gammas = referenceGammas(model);
  let nll = 0;
  for (const r of model.regions) {
    if (r.role === 'validation') continue;
    for (let b = 0; b < r.edges.length - 1; b++) {
      const hasGamma = gammas.has(`${r.key}:${b}`);
      let nu = 0;
      for (const t of model.templates) if (t.region === r.key) nu += templateYield(model, p, r.key, t.process, b, hasGamma);
      const n = r.observed![b];
      if (n > 0 && nu <= 0) return Infinity;
      nll += nu - n + (n > 0 ? n * Math.log(n / nu) : 0);
    }
  }
  for (const s of model.systematics) nll += (p.theta[s.key] ?? 0) ** 2 / 2;
  for (const [key, g] of gammas) nll += (p.gamma[key] - 1) ** 2 / (2 * g.sigma ** 2);
  return nll;
}
