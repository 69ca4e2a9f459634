import { eq, sql } from 'drizzle-orm';
import type { Db } from '../db/client';
import { fits, modelVersions } from '../db/schema';
import { dropFitParts, storeFitParts } from '../db/fits.repository';
import type { StorableResult } from './fit-outcome';
import { JobError } from './threads/fit-thread';
import { jobRow } from './run-rows';
import { engineIdentity } from './engine-identity';
import type { FitInput } from './fit-input';

export { readFitInput, type FitInput } from './fit-input';

export const NOT_FINITE =
  'The fit ended with a number that is not finite (NaN or infinite), so none of its numbers are shown. Check the model for extreme yields or variations, and tell an admin.';

export const INTERRUPTED = 'Interrupted: the server stopped while this fit was running. Start it again.';

/**
 * Runs the engine on a fit's input: reads it (readFitInput), tells `onInput` the input's hash
 * before fitting, then fits; throws JobError (cancelled, input, numeric, internal).
 */
export type ComputeFit = (
  input: FitInput,
  onInput: (inputSha256: string) => void,
  onProgress: (fraction: number, stage: string) => void,
  signal: AbortSignal,
) => Promise<StorableResult>;

/**
 * One fit job from its row to its stored result, wherever it runs (a thread of the server, or a
 * worker process): marks it running, writes progress, stores the result or a failure a person can
 * act on (jobRow). A queued fit names its `coordinator`, so that the server can fail it if that
 * worker stops being seen.
 */
export async function executeFit(
  db: Db,
  id: number,
  compute: ComputeFit,
  control: { signal: AbortSignal; log: (line: string) => void; cancelledBy: () => string | undefined; coordinator?: string },
): Promise<void> {
  const { signal, log } = control;
  const [fit] = await db.select().from(fits).where(eq(fits.id, id));
  if (!fit || fit.state !== 'queued') return;
  // the model as text: the database's own JSON, parsed where the fit runs
  const [version] = await db
    .select({ modelText: sql<string>`${modelVersions.model}::text` })
    .from(modelVersions)
    .where(eq(modelVersions.id, fit.modelVersionId));
  const row = jobRow(db, fits, id);
  if (!(await row.start({ stage: 'starting', coordinatedBy: control.coordinator ?? null }))) return;
  const finish = row.finish;
  // the write of the input's hash, once the fit has read its input: its failure fails the fit
  let identified: Promise<unknown> = Promise.resolve(null);
  try {
    // what computes it, and from exactly what: so that it can be reproduced and checked
    const engine = engineIdentity();
    const onInput = (sha: string) =>
      (identified = db
        .update(fits)
        .set({ engineVersion: engine.version, engineHash: engine.hash, inputSha256: sha })
        .where(eq(fits.id, id))
        .then(
          () => null,
          (e: unknown) => e,
        ));
    const { result, parts } = await compute({ modelText: version.modelText, options: fit.options }, onInput, row.progress, signal).finally(() => identified);
    const unwritten = await identified;
    if (unwritten) throw unwritten;
    // the large parts first, so that a fit readers see as ended has them; gone again if the row
    // was cancelled meanwhile by another process
    await storeFitParts(db, id, parts);
    const stored = await finish({
      state: result.status === 'converged' ? 'succeeded' : 'failed',
      failure: result.status === 'converged' ? null : (result.convergence.failure ?? 'The fit did not converge.'),
      result,
      headline:
        result.status === 'converged' && result.summary
          ? { mu: result.summary.mu.value, muError: result.summary.mu.error, z: result.summary.discovery?.z ?? null, warnings: result.convergence.warnings.length }
          : null,
      progress: 1,
      stage: 'done',
    });
    if (!stored) await dropFitParts(db, id);
  } catch (e) {
    const kind = e instanceof JobError ? e.kind : 'internal';
    if (kind === 'cancelled') await finish({ state: 'cancelled', failure: `Cancelled by ${control.cancelledBy() ?? 'a user'}.`, stage: 'cancelled' });
    else if (kind === 'input') await finish({ state: 'failed', failure: `The model or options cannot be fitted: ${(e as Error).message}`, stage: 'failed' });
    else if (kind === 'shards') {
      log(`[fit ${id}] ${(e as Error).message}`);
      await finish({ state: 'failed', failure: `Part of the fit failed on the workers, and again when retried: ${(e as Error).message}. Tell an admin; the workers' logs say more.`, stage: 'failed' });
    } else if (kind === 'numeric') {
      log(`[fit ${id}] non-finite result: ${(e as Error).message}`);
      await finish({ state: 'failed', failure: `${NOT_FINITE} First at: ${(e as Error).message}.`, stage: 'failed' });
    } else {
      log(`[fit ${id}] ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
      await finish({ state: 'failed', failure: 'The fit stopped on an internal error; it has been logged. Try again, and tell an admin if it persists.', stage: 'failed' });
    }
  }
}
