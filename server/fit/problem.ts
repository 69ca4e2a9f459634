import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptions } from '@shared/schemas/fit';
import { buildModel } from './build-model';
import type { CompiledModel, FitProblem } from './compiled-model';
import { FitInputError } from './errors';
import { createWorkspace, evaluateYields } from './yields';

/**
 * Turns an exchange file and the fit options into the problem the minimiser solves:
 * which regions enter the likelihood, which data, and which parameters are held
 * (docs/likelihood.md §4: a parameter no bin in the fit depends on is held at its start value;
 * in a control-only fit μ is held too).
 */
export function buildProblem(model: ExchangeModel, options: Pick<FitOptions, 'dataset' | 'asimovMu' | 'controlOnly' | 'excludeRegions'>): FitProblem {
  const keys = new Set(model.regions.map((r) => r.key));
  options.excludeRegions.forEach((key, i) => {
    if (!keys.has(key)) throw new FitInputError(`unknown region "${key}" in the regions to exclude`, ['excludeRegions', i]);
  });
  const inFit = regionEntersFit(options);
  const compiled = buildModel(model, inFit);
  if (!compiled.regions.some((r) => r.inFit)) throw new FitInputError('no signal or control region is left in the fit', ['regions']);

  const held = heldParameters(compiled);
  if (options.controlOnly) held[0] = 1;
  const gammaHeld = new Uint8Array(compiled.nGamma);
  for (let g = 0; g < compiled.nGamma; g++) gammaHeld[g] = compiled.binInFit[compiled.gammaBin[g]] ? 0 : 1;

  const problem: FitProblem = { model: compiled, data: new Float64Array(compiled.nBins), held, gammaHeld };
  if (options.dataset === 'asimov') problem.data = asimovData(compiled, options.asimovMu);
  else {
    compiled.regions.forEach((r, i) => {
      if (!r.inFit) return;
      if (!r.observed) throw new FitInputError(`region "${r.key}" has no observed counts: fit an Asimov dataset or exclude the region`, ['regions', i, 'observed']);
      problem.data.set(r.observed, r.firstBin);
    });
  }
  return problem;
}

/** Whether a region enters the likelihood (docs/likelihood.md §4): signal and control regions, less those left out. */
export function regionEntersFit(options: Pick<FitOptions, 'controlOnly' | 'excludeRegions'>) {
  const excluded = new Set(options.excludeRegions);
  return (key: string, role: string) => !excluded.has(key) && (role === 'control' || (role === 'signal' && !options.controlOnly));
}

/**
 * A dense parameter is held when no sample-bin in the fit depends on it: μ without a signal
 * template in the fit, k whose templates are all outside the fit or empty, θ whose effects
 * touch only such templates. An effect on an empty template (ν0 = ν± = 0) is no dependence.
 */
export function heldParameters(m: CompiledModel): Uint8Array {
  const depends = new Uint8Array(m.nDense);
  for (let s = 0; s < m.nSamples; s++) {
    if (!m.sampleInFit[s]) continue;
    const sb0 = m.sampleBinStart[s];
    let nonEmpty = false;
    for (let j = 0; j < m.sampleNBins[s]; j++) if (m.nominal[sb0 + j] > 0) nonEmpty = true;
    if (nonEmpty) {
      if (m.sampleSignal[s]) depends[0] = 1;
      if (m.sampleNorm[s] >= 0) depends[m.sampleNorm[s]] = 1;
      for (let e = m.scalePtr[s]; e < m.scalePtr[s + 1]; e++) depends[m.scaleParam[e]] = 1;
    }
    for (let e = m.shapePtr[s]; e < m.shapePtr[s + 1]; e++) {
      const off = m.shapeOffset[e];
      for (let j = 0; j < m.sampleNBins[s]; j++) {
        // ν± = ν0 + hd ± … : any non-zero nominal or variation makes the bin depend on θ.
        if (m.nominal[sb0 + j] > 0 || m.shapeHd[off + j] !== 0 || m.shapeHs[off + j] !== 0) depends[m.shapeParam[e]] = 1;
      }
    }
  }
  const held = new Uint8Array(m.nDense);
  for (let i = 0; i < m.nDense; i++) held[i] = depends[i] ? 0 : 1;
  return held;
}

/** Start values of the dense parameters and γ = 1. */
export function startPoint(m: CompiledModel): { phi: Float64Array; gamma: Float64Array } {
  return { phi: Float64Array.from(m.start), gamma: new Float64Array(m.nGamma).fill(1) };
}

/**
 * Pre-fit Asimov dataset (docs/likelihood.md §7; Cowan et al., Eur. Phys. J. C 71 (2011) 1554, §5):
 * n_rb = ν_rb at θ = 0, γ = 1, k at its start value and μ as chosen. Not rounded.
 */
export function asimovData(m: CompiledModel, mu: number): Float64Array {
  const { phi, gamma } = startPoint(m);
  phi[0] = mu;
  for (let i = m.thetaStart; i < m.nDense; i++) phi[i] = 0;
  const ws = createWorkspace(m);
  evaluateYields(m, phi, gamma, ws, true);
  return Float64Array.from(ws.nu);
}
