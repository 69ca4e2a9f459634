import type { Histogram, ToyDistribution, ToyHypothesis, ToyQ0, ToyRun } from '@shared/schemas/toys';
import { formatEdge } from '../../lib/format';
import { zFromP } from '../../lib/normal';

/**
 * How the toys' numbers are read against their asymptotic expectation. A standardised
 * distribution should have mean 0 and sd 1; a toy fraction should match its asymptotic
 * probability. Each is judged by its distance in its own standard errors.
 */

/** A mean more than this many standard errors from 0, or an sd this far from 1, is marked. */
export const FLAG_ERRORS = 3;

/** Distance of an estimate from its expectation in standard errors; null when the error is not positive. */
export function inErrors(value: number, expected: number, error: number | null | undefined): number | null {
  if (error === null || error === undefined || !(error > 0) || !Number.isFinite(value)) return null;
  return (value - expected) / error;
}

export type Deviation = {
  /** (mean − 0) / error of the mean */
  mean: number | null;
  /** (sd − 1) / error of the sd */
  sd: number | null;
  meanOff: boolean;
  sdOff: boolean;
};

/** How far a standardised toy distribution sits from the standard normal. */
export function deviationOf(d: Pick<ToyDistribution, 'mean' | 'meanError' | 'sd' | 'sdError'>): Deviation {
  const mean = inErrors(d.mean, 0, d.meanError);
  const sd = inErrors(d.sd, 1, d.sdError);
  return { mean, sd, meanOff: mean !== null && Math.abs(mean) > FLAG_ERRORS, sdOff: sd !== null && Math.abs(sd) > FLAG_ERRORS };
}

/** Binomial standard error of a fraction f of n trials: √(f(1 − f)/n). */
export function fractionError(f: number, n: number): number | null {
  return n > 0 && f >= 0 && f <= 1 ? Math.sqrt((f * (1 - f)) / n) : null;
}

/**
 * With no toy at or above the observed value, the 95 % upper bound on p is about 3/n (the
 * "rule of three": (1 − p)ⁿ = 0.05 ⇒ p ≈ −ln 0.05 / n ≈ 3/n).
 */
export function upperBoundWithNone(n: number): number | null {
  return n > 0 ? Math.min(1, -Math.log(0.05) / n) : null;
}

export type Verdict = 'agree' | 'disagree' | 'untested';

export type PValueComparison = {
  toy: number;
  toyError: number;
  count: number;
  asymptotic: number;
  toyZ: number | null;
  /** Z at p + error and at p − error: the toy Z's ±1 standard-error range */
  toyZRange: [number | null, number | null];
  asymptoticZ: number | null;
  /** (toy − asymptotic) / toy error; null when no toy reached the observed value */
  difference: number | null;
  verdict: Verdict;
  /** 95 % upper bound on the toy p when no toy reached the observed value */
  upperBound: number | null;
  /** toys needed for about ten at or above the observed value, at the asymptotic p */
  toysForTen: number | null;
};

/** The toy p-value of the observed q0 against the asymptotic one; null when the reference fit has no q0. */
export function comparePValues(q0: ToyQ0): PValueComparison | null {
  const { toyPValue: toy, toyPValueError: err, toysAtOrAbove: count, asymptoticPValue: asymptotic } = q0;
  if (q0.observed === null || toy === null || err === null || count === null || asymptotic === null) return null;
  const none = count === 0;
  const difference = none ? null : inErrors(toy, asymptotic, err);
  const upperBound = none ? upperBoundWithNone(q0.n) : null;
  // With no toy above, the toys only say p < 3/n: they test the asymptotic value only if it lies above that.
  const verdict: Verdict = none
    ? upperBound !== null && asymptotic > upperBound
      ? 'disagree'
      : 'untested'
    : difference === null
      ? 'untested'
      : Math.abs(difference) > FLAG_ERRORS
        ? 'disagree'
        : 'agree';
  return {
    toy,
    toyError: err,
    count,
    asymptotic,
    toyZ: none ? null : zFromP(toy),
    toyZRange: none ? [null, null] : [zFromP(Math.min(1, toy + err)), toy - err > 0 ? zFromP(toy - err) : null],
    asymptoticZ: zFromP(asymptotic),
    difference,
    verdict,
    upperBound,
    toysForTen: asymptotic > 0 ? Math.ceil(10 / asymptotic) : null,
  };
}

/** The fraction of toys with q0 = 0 against its asymptotic value Φ(−μ′/σ). */
export function compareZeroFraction(q0: ToyQ0): { error: number | null; difference: number | null; off: boolean } {
  const error = fractionError(q0.zeroFraction, q0.n);
  // A fraction of exactly 0 or 1 has no binomial error of its own; judge it with the expected one.
  const judgeBy = error && error > 0 ? error : fractionError(q0.expectedZeroFraction, q0.n);
  const difference = inErrors(q0.zeroFraction, q0.expectedZeroFraction, judgeBy);
  return { error, difference, off: difference !== null && Math.abs(difference) > FLAG_ERRORS };
}

/** Where the toys were drawn from, in words. */
export function hypothesisInWords(h: ToyHypothesis): string {
  return h.kind === 'best-fit' ? 'best fit' : `μ held at ${formatEdge(h.mu)}`;
}

/** A run as people name it: its label, or its number. */
export function toyRunName(r: Pick<ToyRun, 'id' | 'label'>): string {
  return r.label || `Toy run ${r.id}`;
}

/** Whether every bin has the same width (to a part in a million of the range). */
export function uniformBins(h: Pick<Histogram, 'edges'>): boolean {
  const e = h.edges;
  if (e.length < 2) return false;
  const w = (e[e.length - 1] - e[0]) / (e.length - 1);
  return e.every((x, i) => i === 0 || Math.abs(x - e[i - 1] - w) <= 1e-6 * Math.abs(e[e.length - 1] - e[0]));
}
