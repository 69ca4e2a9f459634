import type { FitState } from '@shared/schemas/fits';

/** A fit whose job has not ended yet: its screens poll for progress. */
export function isActive(state: FitState): boolean {
  return state === 'queued' || state === 'running';
}

/** How often a screen asks for a running fit's progress, in milliseconds. */
export const POLL_MS = 700;
