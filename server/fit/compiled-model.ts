/**
 * The model as the fit sees it: flat typed arrays, built once from the exchange file
 * (docs/likelihood.md §1–3). Every array here is plain data, so a compiled model can be sent to a
 * worker thread as it is.
 *
 * Parameters are split in two blocks:
 *  - dense: μ (index 0), the floating normalisations k, the parameters of interest besides μ (kind
 *    'poi', compiled as factors like k), then the nuisance parameters θ;
 *  - γ: one template-statistics parameter per bin, kept apart because each touches one bin.
 * A sample is one (region, process) template; its bins are stored contiguously
 * ("sample-bins"), starting at sampleBinStart[s] and covering every bin of its region.
 */

export type DenseKind = 'poi' | 'normalisation' | 'nuisance';

export interface CompiledRegion {
  key: string;
  role: 'signal' | 'control' | 'validation';
  edges: number[];
  /** Index of its first bin in the global bin arrays. */
  firstBin: number;
  nBins: number;
  /** Enters the likelihood (role signal/control and not excluded). */
  inFit: boolean;
  /** Observed counts as uploaded, or null when withheld. */
  observed: number[] | null;
  /** Samples (indices) in this region, in process order. */
  samples: number[];
  /** Sorted dense parameters any sample of this region depends on. */
  parameters: Int32Array;
}

export interface CompiledModel {
  name: string;
  processes: { key: string; signal: boolean }[];
  regions: CompiledRegion[];

  // Dense parameters.
  nDense: number;
  /** Floating normalisations and parameters of interest besides μ: the factors between μ and θ. */
  nNorms: number;
  nSyst: number;
  /** First θ index (= 1 + nNorms). */
  thetaStart: number;
  names: string[];
  labels: string[];
  kinds: DenseKind[];
  groups: (string | null)[];
  start: Float64Array;
  lower: Float64Array;
  upper: Float64Array;

  // Bins (all regions, validation ones too).
  nBins: number;
  binRegion: Int32Array;
  /** γ index of the bin, or −1. */
  binGamma: Int32Array;
  binInFit: Uint8Array;

  // γ parameters.
  nGamma: number;
  gammaBin: Int32Array;
  /** Relative width σ_rb = sqrt(Σ v) / Σ ν0 over the processes that carry a variance. */
  gammaSigma: Float64Array;

  // Samples.
  nSamples: number;
  sampleRegion: Int32Array;
  sampleProcess: Int32Array;
  sampleFirstBin: Int32Array;
  sampleNBins: Int32Array;
  sampleBinStart: Int32Array;
  sampleSignal: Uint8Array;
  /** Dense index of the floating normalisation or parameter of interest that multiplies it, or −1. */
  sampleNorm: Int32Array;
  /** 1 when the template carries a variance in any bin. */
  sampleStat: Uint8Array;
  /** Per sample-bin: 1 when v > 0 there, so the γ of that bin multiplies it. */
  carriesVariance: Uint8Array;
  sampleInFit: Uint8Array;
  /** Sorted dense θ indices the sample depends on (CSR by sampleParamPtr). */
  sampleParamPtr: Int32Array;
  sampleParams: Int32Array;

  /** Nominal template per sample-bin. */
  nominal: Float64Array;
  /** Variance per sample-bin (zero when none given). */
  variance: Float64Array;

  // Shape effects, CSR by sample: θ index, and per bin hd = (a − b)/2, hs = (a + b)/2 with
  // a = ν+ − ν0, b = ν− − ν0 stored at shapeData[shapeOffset[e] + j].
  shapePtr: Int32Array;
  shapeParam: Int32Array;
  shapeOffset: Int32Array;
  shapeHd: Float64Array;
  shapeHs: Float64Array;

  // Scale effects, CSR by sample: θ index, hd and hs of (ln κ+, ln κ−).
  scalePtr: Int32Array;
  scaleParam: Int32Array;
  scaleHd: Float64Array;
  scaleHs: Float64Array;
}

/**
 * Global observables: the centres of the Gaussian constraints, (θ_i − a_i)²/2 and
 * (γ − g)²/(2σ²). Left out, the centres are the nominal a = 0 and g = 1 of docs/likelihood.md §4; a
 * pseudo-experiment draws them around its generation point.
 */
export interface GlobalObservables {
  /** Length nDense; entries i ≥ thetaStart are the centres a_i of the θ constraints (the rest unused). */
  theta: Float64Array;
  /** Length nGamma: the centres g of the γ constraints. */
  gamma: Float64Array;
}

/** A model plus the data it is fitted to and the parameters held fixed. */
export interface FitProblem {
  model: CompiledModel;
  /** Counts per bin (the observed data or an Asimov dataset); zero outside the fit. */
  data: Float64Array;
  /** Dense parameters held at their start value (1 = held). */
  held: Uint8Array;
  /** γ parameters held at 1 (outside the fit). */
  gammaHeld: Uint8Array;
  /** Centres of the constraints; nominal (θ: 0, γ: 1) when left out. */
  globals?: GlobalObservables;
}
