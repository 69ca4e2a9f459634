import type { ExchangeModel } from '@shared/schemas/exchange';
import type { CompiledModel, CompiledRegion, DenseKind } from './compiled-model';

/**
 * Where the relative width σ_rb of a γ is taken as is. Below 1e-9 the constraint pins γ to 1 and
 * 1/σ² leaves the double range, so the bin gets no γ. Above 1e4 the constraint term is below
 * 4e-7 anywhere in γ's bounds [0, 10], so σ is held at 1e4 (its square stays finite).
 */
export const GAMMA_SIGMA_RANGE = { min: 1e-9, max: 1e4 } as const;

/**
 * Builds the flat model of docs/likelihood.md §1–3 from an exchange file that has passed the schema.
 * `inFit(region)` says which regions enter the likelihood (signal/control roles, minus any
 * the caller excludes). γ parameters exist where the sum of nominals carrying a variance is
 * positive (Barlow–Beeston lite; Conway 2011, arXiv:1103.0354).
 */
export function buildModel(model: ExchangeModel, inFit: (regionKey: string, role: string) => boolean): CompiledModel {
  const processIndex = new Map(model.processes.map((p, i) => [p.key, i]));
  const processes = model.processes.map((p) => ({ key: p.key, signal: p.kind === 'signal' }));

  // Dense parameters: μ, the floating normalisations, the nuisance parameters.
  const names: string[] = ['mu'];
  const labels: string[] = ['signal strength'];
  const kinds: DenseKind[] = ['poi'];
  const groups: (string | null)[] = [null];
  const start = [model.signalStrength.start];
  const lower = [model.signalStrength.min];
  const upper = [model.signalStrength.max];
  const normOf = new Map<string, number>();
  // Parameters of interest besides μ are compiled like floating normalisations, and μ no longer
  // multiplies their templates.
  const poiOf = new Set<string>();
  const addFactor = (f: { key: string; label?: string; start: number; min: number; max: number; targets: { region: string; process: string }[] }, kind: 'normalisation' | 'poi') => {
    const idx = names.length;
    names.push(f.key);
    labels.push(f.label ?? f.key);
    kinds.push(kind);
    groups.push(null);
    start.push(f.start);
    lower.push(f.min);
    upper.push(f.max);
    for (const t of f.targets) {
      normOf.set(`${t.region}\u0000${t.process}`, idx);
      if (kind === 'poi') poiOf.add(`${t.region}\u0000${t.process}`);
    }
  };
  for (const f of model.floatingNorms) addFactor(f, 'normalisation');
  for (const q of model.parametersOfInterest ?? []) addFactor(q, 'poi');
  const thetaStart = names.length;
  for (const s of model.systematics) {
    names.push(s.key);
    labels.push(s.label ?? s.key);
    kinds.push('nuisance');
    groups.push(s.group ?? null);
    start.push(0);
    lower.push(-5);
    upper.push(5);
  }
  const nDense = names.length;

  // Regions and bins.
  let nBins = 0;
  const regions: CompiledRegion[] = model.regions.map((r) => {
    const region: CompiledRegion = {
      key: r.key,
      role: r.role,
      edges: r.edges,
      firstBin: nBins,
      nBins: r.edges.length - 1,
      inFit: inFit(r.key, r.role),
      observed: r.observed ?? null,
      samples: [],
      parameters: new Int32Array(0),
    };
    nBins += region.nBins;
    return region;
  });
  const regionIndex = new Map(regions.map((r, i) => [r.key, i]));
  const binRegion = new Int32Array(nBins);
  const binInFit = new Uint8Array(nBins);
  regions.forEach((r, i) => {
    for (let j = 0; j < r.nBins; j++) {
      binRegion[r.firstBin + j] = i;
      binInFit[r.firstBin + j] = r.inFit ? 1 : 0;
    }
  });

  // Samples, ordered by region then process so a region's samples are contiguous.
  const templates = [...model.templates].sort(
    (a, b) => regionIndex.get(a.region)! - regionIndex.get(b.region)! || processIndex.get(a.process)! - processIndex.get(b.process)!,
  );
  const nSamples = templates.length;
  const sampleIndex = new Map<string, number>();
  const sampleRegion = new Int32Array(nSamples);
  const sampleProcess = new Int32Array(nSamples);
  const sampleFirstBin = new Int32Array(nSamples);
  const sampleNBins = new Int32Array(nSamples);
  const sampleBinStart = new Int32Array(nSamples);
  const sampleSignal = new Uint8Array(nSamples);
  const sampleNorm = new Int32Array(nSamples).fill(-1);
  const sampleStat = new Uint8Array(nSamples);
  const sampleInFit = new Uint8Array(nSamples);
  let nSampleBins = 0;
  templates.forEach((t, s) => {
    const r = regionIndex.get(t.region)!;
    const p = processIndex.get(t.process)!;
    sampleIndex.set(`${t.region}\u0000${t.process}`, s);
    sampleRegion[s] = r;
    sampleProcess[s] = p;
    sampleFirstBin[s] = regions[r].firstBin;
    sampleNBins[s] = regions[r].nBins;
    sampleBinStart[s] = nSampleBins;
    sampleSignal[s] = processes[p].signal && !poiOf.has(`${t.region}\u0000${t.process}`) ? 1 : 0;
    sampleNorm[s] = normOf.get(`${t.region}\u0000${t.process}`) ?? -1;
    sampleStat[s] = t.variance?.some((v) => v > 0) ? 1 : 0;
    sampleInFit[s] = regions[r].inFit ? 1 : 0;
    regions[r].samples.push(s);
    nSampleBins += regions[r].nBins;
  });
  const nominal = new Float64Array(nSampleBins);
  const variance = new Float64Array(nSampleBins);
  const carriesVariance = new Uint8Array(nSampleBins);
  templates.forEach((t, s) => {
    nominal.set(t.nominal, sampleBinStart[s]);
    if (t.variance) variance.set(t.variance, sampleBinStart[s]);
  });
  for (let i = 0; i < nSampleBins; i++) carriesVariance[i] = variance[i] > 0 ? 1 : 0;

  // Effects, grouped per sample.
  type Shape = { param: number; up: number[]; down: number[] };
  type Scale = { param: number; up: number; down: number };
  const shapes: Shape[][] = Array.from({ length: nSamples }, () => []);
  const scales: Scale[][] = Array.from({ length: nSamples }, () => []);
  model.systematics.forEach((sys, i) => {
    for (const e of sys.effects) {
      const s = sampleIndex.get(`${e.region}\u0000${e.process}`)!;
      if (e.kind === 'shape') shapes[s].push({ param: thetaStart + i, up: e.up, down: e.down });
      else scales[s].push({ param: thetaStart + i, up: e.up, down: e.down });
    }
  });
  const shapePtr = new Int32Array(nSamples + 1);
  const scalePtr = new Int32Array(nSamples + 1);
  for (let s = 0; s < nSamples; s++) {
    shapePtr[s + 1] = shapePtr[s] + shapes[s].length;
    scalePtr[s + 1] = scalePtr[s] + scales[s].length;
  }
  const shapeParam = new Int32Array(shapePtr[nSamples]);
  const shapeOffset = new Int32Array(shapePtr[nSamples]);
  let shapeLength = 0;
  for (let s = 0; s < nSamples; s++) for (let e = 0; e < shapes[s].length; e++) shapeLength += sampleNBins[s];
  const shapeHd = new Float64Array(shapeLength);
  const shapeHs = new Float64Array(shapeLength);
  const scaleParam = new Int32Array(scalePtr[nSamples]);
  const scaleHd = new Float64Array(scalePtr[nSamples]);
  const scaleHs = new Float64Array(scalePtr[nSamples]);
  let offset = 0;
  for (let s = 0; s < nSamples; s++) {
    const nb = sampleNBins[s];
    const sb0 = sampleBinStart[s];
    shapes[s].forEach((e, k) => {
      const idx = shapePtr[s] + k;
      shapeParam[idx] = e.param;
      shapeOffset[idx] = offset;
      for (let j = 0; j < nb; j++) {
        const a = e.up[j] - nominal[sb0 + j];
        const b = e.down[j] - nominal[sb0 + j];
        shapeHd[offset + j] = 0.5 * (a - b);
        shapeHs[offset + j] = 0.5 * (a + b);
      }
      offset += nb;
    });
    scales[s].forEach((e, k) => {
      const idx = scalePtr[s] + k;
      const a = Math.log(e.up);
      const b = Math.log(e.down);
      scaleParam[idx] = e.param;
      scaleHd[idx] = 0.5 * (a - b);
      scaleHs[idx] = 0.5 * (a + b);
    });
  }

  // θ dependencies per sample and the dense parameters each region touches.
  const sampleParamPtr = new Int32Array(nSamples + 1);
  const paramLists: number[][] = [];
  for (let s = 0; s < nSamples; s++) {
    const set = new Set<number>([...shapes[s].map((e) => e.param), ...scales[s].map((e) => e.param)]);
    const list = [...set].sort((a, b) => a - b);
    paramLists.push(list);
    sampleParamPtr[s + 1] = sampleParamPtr[s] + list.length;
  }
  const sampleParams = Int32Array.from(paramLists.flat());
  for (const region of regions) {
    const set = new Set<number>();
    for (const s of region.samples) {
      if (sampleSignal[s]) set.add(0);
      if (sampleNorm[s] >= 0) set.add(sampleNorm[s]);
      for (const p of paramLists[s]) set.add(p);
    }
    region.parameters = Int32Array.from([...set].sort((a, b) => a - b));
  }

  // γ: one per bin where the nominals carrying a variance sum to more than zero (and σ is not negligible).
  const binGamma = new Int32Array(nBins).fill(-1);
  const gammaBins: number[] = [];
  const gammaSigmas: number[] = [];
  for (const region of regions) {
    for (let j = 0; j < region.nBins; j++) {
      let sumNominal = 0;
      let sumVariance = 0;
      for (const s of region.samples) {
        if (!carriesVariance[sampleBinStart[s] + j]) continue;
        sumNominal += nominal[sampleBinStart[s] + j];
        sumVariance += variance[sampleBinStart[s] + j];
      }
      const sigma = Math.sqrt(sumVariance) / sumNominal;
      // a width below 1e-9 pins γ to 1 anyway (and 1/σ² would overflow): no γ for that bin
      if (sumNominal > 0 && sumVariance > 0 && sigma >= GAMMA_SIGMA_RANGE.min) {
        binGamma[region.firstBin + j] = gammaBins.length;
        gammaBins.push(region.firstBin + j);
        gammaSigmas.push(Math.min(sigma, GAMMA_SIGMA_RANGE.max));
      }
    }
  }

  return {
    name: model.name,
    processes,
    regions,
    nDense,
    nNorms: thetaStart - 1,
    nSyst: model.systematics.length,
    thetaStart,
    names,
    labels,
    kinds,
    groups,
    start: Float64Array.from(start),
    lower: Float64Array.from(lower),
    upper: Float64Array.from(upper),
    nBins,
    binRegion,
    binGamma,
    binInFit,
    nGamma: gammaBins.length,
    gammaBin: Int32Array.from(gammaBins),
    gammaSigma: Float64Array.from(gammaSigmas),
    nSamples,
    sampleRegion,
    sampleProcess,
    sampleFirstBin,
    sampleNBins,
    sampleBinStart,
    sampleSignal,
    sampleNorm,
    sampleStat,
    carriesVariance,
    sampleInFit,
    sampleParamPtr,
    sampleParams,
    nominal,
    variance,
    shapePtr,
    shapeParam,
    shapeOffset,
    shapeHd,
    shapeHs,
    scalePtr,
    scaleParam,
    scaleHd,
    scaleHs,
  };
}
