/** The fit engine's public API (MODEL.md; docs/fit-engine.md). */
export { fitModel, type FitControl } from './fit';
export { regionEntersFit } from './problem';
export { scanParameter } from './parameter-scan';
export { createFitPool, type FitPool, type FitPoolOptions } from './pool';
export { FitCancelledError, FitInputError } from './errors';
export { syntheticModel, SYNTHETIC_SIZES, type SyntheticSize, type SyntheticSpec } from './synthetic';
export { normalCdf, normalSurvival, normalQuantile, chiSquareCdf, chiSquareSurvival, chiSquareQuantile } from './distributions';
export { prepareToys, runToys, summariseToys, createToyFitter, runToyTask, type ToyPlan, type ToyParameter, type ToyOutcome, type ToyTask, type ToyControl, type ToyFitter } from './toys';
export { variantIssues, partName, hideMu } from './variants';
