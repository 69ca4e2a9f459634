import type { ExchangeModel } from '@shared/schemas/exchange';
import type { FitOptionsInput, ParameterScan } from '@shared/schemas/fit';
import { FitInputError } from './errors';
import { informationBreakdown } from './information';
import { bestFitFor, scanFromBestFit } from './parameter-scan';
import { createWorkspace, evaluateYields, type Workspace } from './yields';
import type { CompiledModel } from './compiled-model';

/** One bin of a region in the fit, seen from one parameter at the best fit. */
export interface DiagnosisBinNumbers {
  bin: number;
  /** (∂ν/∂θ)²/ν̂ */
  information: number;
  /** ν̂ */
  expected: number;
  /** ν(θ = +1) − ν(θ = 0) and ν(θ = −1) − ν(θ = 0), every other parameter at its best fit */
  up: number;
  down: number;
  /** the fitted count (observed or Asimov) */
  data: number;
}

export interface ParameterDiagnosisNumbers {
  parameter: string;
  /** Why there is nothing to show (the fit failed, the parameter is held); null otherwise. */
  failure: string | null;
  value: number;
  error: number | null;
  information: { total: number; constraint: number; width: number };
  regions: { region: string; role: 'signal' | 'control' | 'validation'; information: number; bins: DiagnosisBinNumbers[] }[];
  scan: ParameterScan;
}

function countsAt(m: CompiledModel, phi: Float64Array, gamma: Float64Array, ws: Workspace): Float64Array {
  evaluateYields(m, phi, gamma, ws);
  return Float64Array.from(ws.nu);
}

/**
 * Everything the diagnosis panel shows of one nuisance parameter (docs/likelihood.md §6), from one fit of
 * `model` with `options`: refits to the same minimum as the stored fit (the engine is
 * deterministic), then per bin of every region in the fit the parameter's information, the
 * expected count, its ±1 variation in events, and the profile scan of the parameter.
 * Runs in the calling thread.
 */
export function diagnoseParameter(model: ExchangeModel, optionsInput: FitOptionsInput, parameter: string, points = 21): ParameterDiagnosisNumbers {
  const fitted = bestFitFor(model, optionsInput, parameter, (index, m) => index >= m.thetaStart);
  if (fitted.kind === 'unknown') throw new FitInputError(`"${parameter}" is not a nuisance parameter of this model`, ['parameter']);
  if (fitted.kind === 'none') {
    const { m, index, failure } = fitted;
    return { parameter, failure, value: m.start[index], error: null, information: { total: 1, constraint: 1, width: 1 }, regions: [], scan: scanFromBestFit(fitted, parameter, points) };
  }
  const { problem, m, index, ctx } = fitted;

  const info = informationBreakdown(ctx).find((x) => x.parameter === parameter)!;
  const ws = createWorkspace(m);
  const at = (theta: number) => {
    const phi = Float64Array.from(ctx.phi);
    phi[index] = theta;
    return countsAt(m, phi, ctx.gamma, ws);
  };
  const best = countsAt(m, ctx.phi, ctx.gamma, ws);
  const [nominal, up, down] = [at(0), at(1), at(-1)];
  // per-bin information as the engine computed it; bins below its reporting share are recomputed as 0
  const binInfo = new Map(info.regions.flatMap((r) => r.bins.map((b) => [`${r.region}\u0000${b.bin}`, b.information] as const)));
  const regions = m.regions
    .filter((r) => r.inFit)
    .map((r) => ({
      region: r.key,
      role: r.role,
      information: info.regions.find((x) => x.region === r.key)?.information ?? 0,
      bins: Array.from({ length: r.nBins }, (_, j) => {
        const b = r.firstBin + j;
        return {
          bin: j,
          information: binInfo.get(`${r.key}\u0000${j}`) ?? 0,
          expected: best[b],
          up: up[b] - nominal[b],
          down: down[b] - nominal[b],
          data: problem.data[b],
        };
      }),
    }));

  const scan = scanFromBestFit(fitted, parameter, points);
  const variance = ctx.V[index * m.nDense + index];
  return {
    parameter,
    failure: null,
    value: ctx.phi[index],
    error: variance > 0 ? Math.sqrt(variance) : null,
    information: { total: info.total, constraint: info.constraint, width: info.width },
    regions,
    scan,
  };
}
