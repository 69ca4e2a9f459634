/**
 * The fit engine's public API (docs/likelihood.md; docs/fit-engine.md). Code outside server/fit imports
 * the engine only from here (tests/architecture/server-layers.test.ts checks it).
 */
export { fitModel, type FitControl } from './fit';
export { regionEntersFit } from './problem';
export { scanParameter } from './parameter-scan';
export { profileContour, contourLines, CONTOUR_LEVELS, type ContourControl } from './contour';
export { FitCancelledError, FitInputError } from './errors';
export { syntheticModel, createRandom, SYNTHETIC_SIZES, type SyntheticOptions, type SyntheticSize, type SyntheticSpec } from './synthetic';
export { normalCdf, normalSurvival, normalQuantile, chiSquareCdf, chiSquareSurvival, chiSquareQuantile } from './distributions';
export { prepareToys, runToys, summariseToys, createToyFitter, runToyTask, type ToyPlan, type ToyParameter, type ToyOutcome, type ToyTask, type ToyControl, type ToyFitter } from './toys';
export { variantIssues, partName, hideMu } from './variants';
export { diagnoseParameter, type ParameterDiagnosisNumbers } from './diagnosis';
export { whatIf, type WhatIfInput, type WhatIfOutcome } from './what-if';
// scans over signal hypotheses, and their background-only toys (a worker runs runScanToyTask)
export { scanHypotheses, type HypothesisScanControl } from './hypotheses';
export { hypothesisModel } from './hypothesis-model';
export { createScanToyFitter, runScanToyTask, type ScanToyFitter, type ScanToyOutcome, type ScanToySetup, type ScanToyTask } from './hypothesis-toys';
// refits on threads: the engine sends plain-data batches, server/runs/threads runs them
export { runRefits, toShared, toPlain, type FitPool, type RefitBatch, type RunRefitsControl } from './refit-batches';
export { Refitter, type RefitTask, type RefitResult } from './refit-tasks';
export { createScratch, type Scratch } from './minimiser';
export type { FitContext } from './covariance';
// the refit-agreement suite (npm run check:refits)
export { runColdFits, type ColdFit, type ColdFitTask } from './refit-reference';
