/**
 * Contract breaks: the caller handed the engine something it cannot fit. Expected numerical
 * outcomes (no convergence, a singular Hessian, a parameter at its bound) are never thrown;
 * they are reported in the result.
 */

/** The model or the options break the contract (an unknown region, missing data, …). */
export class FitInputError extends Error {
  override name = 'FitInputError';
  constructor(
    message: string,
    readonly path: (string | number)[] = [],
  ) {
    super(message);
  }
}

/** The caller aborted the fit through its AbortSignal. */
export class FitCancelledError extends Error {
  override name = 'FitCancelledError';
  constructor(message = 'the fit was cancelled') {
    super(message);
  }
}

export function throwIfAborted(signal: AbortSignal | undefined): void {
  if (signal?.aborted) throw new FitCancelledError();
}
