import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { FitCancelledError, fitFactorizationMachine, type FitProgress } from '@/lib/fit/fit-factorization-machine';
import { readObservationFile } from '@/lib/fit/read-observations';
import { ImportError } from '@/lib/import/types';
import { findFit } from './fits';
import { discardFitInput, fitInputFile } from './inputs';
import { StoreCancelled, storeFit } from './store';

/** Progress is written at most this often: often enough for a live bar, rarely enough to cost nothing. */
const PROGRESS_INTERVAL_MS = 1000;
/**
 * The fit computes on the worker's main thread (small designs; large ones use worker threads).
 * Between progress writes it hands the event loop a turn this often, so the worker's other jobs,
 * the queue's polling and the database client keep moving while a fit runs.
 */
const YIELD_INTERVAL_MS = 20;

const MODEL_LABELS: Record<FitProgress['model'], string> = { fm: 'factorization machine', mainEffects: 'main effects', intercept: 'intercept only' };

function phaseOf(progress: FitProgress, folds: number): string {
  const where =
    progress.phase === 'cross-validation'
      ? `fold ${progress.fold ?? '?'}/${folds}, ${MODEL_LABELS[progress.model]}`
      : progress.phase === 'variational'
        ? 'variational inference'
        : `all data, ${MODEL_LABELS[progress.model]}`;
  const objective = Number.isFinite(progress.objective) ? progress.objective.toPrecision(6) : String(progress.objective);
  return `${where}, iteration ${progress.iteration}, objective ${objective}`;
}

export interface FitJobOptions {
  /** Threads for large designs (lib/fit/parallel.ts); results do not depend on it. */
  threads?: number;
  /** Sends a projection job to the queue (the worker's own queue handle); returns the job id. */
  enqueueProjection: (projectionId: string) => Promise<string | null>;
}

/**
 * Runs one fit job: reads the staged table, fits, stores both factor sets and the results in one
 * transaction, then queues a PCA projection of each set. Cancellation is noticed at the next
 * progress report (the API marks the row cancelled). A failure is recorded on the fit and not
 * rethrown: the fit is deterministic, so a retry would fail the same way. A worker that dies
 * mid-fit leaves the row running; the queue retries the job after its time limit and this starts over.
 */
export async function runFitJob(db: Kysely<Database>, fitId: string, options: FitJobOptions): Promise<void> {
  const fit = await findFit(db, fitId);
  if (!fit) {
    await discardFitInput(fitId);
    return;
  }
  if (fit.status !== 'queued' && fit.status !== 'running') {
    await discardFitInput(fitId);
    return;
  }
  const started = Date.now();
  const claimed = await db
    .updateTable('fits')
    .set((eb) => ({ status: 'running', started_at: new Date(), progress: 0, phase: 'reading the observations', error: null, attempts: eb('attempts', '+', 1) }))
    .where('id', '=', fitId)
    .where('status', 'in', ['queued', 'running'])
    .executeTakeFirst();
  if (claimed.numUpdatedRows === 0n) {
    await discardFitInput(fitId);
    return;
  }

  let lastWrite = 0;
  let lastYield = Date.now();
  const settings = fit.settings;
  const onProgress = async (progress: FitProgress): Promise<boolean> => {
    const now = Date.now();
    if (now - lastWrite < PROGRESS_INTERVAL_MS) {
      if (now - lastYield >= YIELD_INTERVAL_MS) {
        lastYield = now;
        await new Promise<void>((resolve) => setImmediate(resolve));
      }
      return true;
    }
    lastWrite = now;
    lastYield = now;
    const row = await db
      .updateTable('fits')
      .set({ progress: Math.min(0.99, progress.completedFits / Math.max(1, progress.totalFits)), phase: phaseOf(progress, settings.folds) })
      .where('id', '=', fitId)
      .where('status', '=', 'running')
      .returning('status')
      .executeTakeFirst()
      .catch((error: unknown) => {
        console.error(`fit ${fitId}: progress could not be written`, error);
        return { status: 'running' as const };
      });
    return row !== undefined;
  };

  try {
    const design = await readObservationFile({ path: fitInputFile(fitId), name: fit.sourceName }, settings);
    // Reading a large table takes a while: look for a cancel before the fitting starts.
    const current = await db.selectFrom('fits').select('status').where('id', '=', fitId).executeTakeFirst();
    if (current?.status !== 'running') throw new FitCancelledError();
    await db.updateTable('fits').set({ phase: `fitting: ${design.n} observations, ${design.rowIds.length} × ${design.columnIds.length} entities` }).where('id', '=', fitId).where('status', '=', 'running').execute();
    const result = await fitFactorizationMachine(design, { ...settings, threads: options.threads }, undefined, onProgress);
    await db.updateTable('fits').set({ phase: 'storing the factor sets', progress: 0.99 }).where('id', '=', fitId).where('status', '=', 'running').execute();
    const stored = await storeFit(db, fit, result, { row: design.row, column: design.column }, started);
    await discardFitInput(fitId);
    await queueProjections(db, stored.projectionIds, options);
  } catch (error) {
    if (error instanceof FitCancelledError || error instanceof StoreCancelled) {
      await db
        .updateTable('fits')
        .set({ status: 'cancelled', phase: 'cancelled', finished_at: new Date() })
        .where('id', '=', fitId)
        .where('status', 'in', ['running', 'cancelled'])
        .execute();
      await discardFitInput(fitId);
      return;
    }
    // Bad input was refused when the fit was submitted; what reaches here is a changed or missing
    // file, or a problem in the numeric core. Either way the message is for the analyst.
    const message = error instanceof ImportError || error instanceof RangeError ? error.message : error instanceof Error ? `the fit failed: ${error.message}` : String(error);
    if (!(error instanceof ImportError)) console.error(`fit ${fitId} failed`, error);
    await db
      .updateTable('fits')
      .set({ status: 'failed', phase: 'failed', error: message, finished_at: new Date(), duration_ms: Date.now() - started })
      .where('id', '=', fitId)
      .where('status', '=', 'running')
      .execute();
    await discardFitInput(fitId);
  }
}

/** Sends the jobs of the projections recorded with the fit; a refused one is marked failed, as the projection API does. */
async function queueProjections(db: Kysely<Database>, projectionIds: string[], options: FitJobOptions): Promise<void> {
  for (const projectionId of projectionIds) {
    const jobId = await options.enqueueProjection(projectionId).catch((error: unknown) => {
      console.error(`fit: could not queue projection ${projectionId}`, error);
      return null;
    });
    // The fit itself is stored either way; a failed projection can be requested again from the factor set's page.
    await db
      .updateTable('projections')
      .set(jobId ? { job_id: jobId } : { status: 'failed', error: 'the job queue refused the job; request it again' })
      .where('id', '=', projectionId)
      .execute()
      .catch((error: unknown) => console.error(`fit: could not record the job of projection ${projectionId}`, error));
  }
}
