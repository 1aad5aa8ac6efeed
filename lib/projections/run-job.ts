import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { mulberry32 } from '@/lib/align/random';
import { readMatrix } from '@/lib/factor-sets/blocks';
import { findFactorSet } from '@/lib/factor-sets/factor-sets';
import { FIDELITY_KS, PRESERVATION_K } from '@/lib/projection/fidelity';
import { projectionFidelityParallel } from '@/lib/projection/fidelity-parallel';
import { firstNeighbours } from '@/lib/projection/knn-graph';
import { runProjection } from '@/lib/projection/methods';
import { factorSetGraph } from './knn-cache';
import { findProjection, type ProjectionQuality, writeProjectionBlocks } from './projections';
import { FIDELITY_MAX_ENTITIES, perPointFidelityFromGraph, sampledProjectionQuality } from './sampled-fidelity';

const PROGRESS_INTERVAL_MS = 400;

class Cancelled extends Error {
  override name = 'AbortError';
}

/**
 * Runs one projection job: layout, fidelity scores, stored results. Cancellation is noticed at each
 * progress report (the API marks the row cancelled). A failure is recorded on the projection and
 * not rethrown: retrying a deterministic failure would fail the same way. A worker that dies
 * mid-job leaves the row running; the queue retries the job after its time limit and this starts over.
 */
export async function runProjectionJob(db: Kysely<Database>, projectionId: string, options: { threads: number }): Promise<void> {
  const projection = await findProjection(db, projectionId);
  if (!projection || projection.status === 'done' || projection.status === 'cancelled') return;
  const factorSet = await findFactorSet(db, projection.factorSetId);
  if (!factorSet) return;
  const started = Date.now();
  const claimed = await db
    .updateTable('projections')
    .set((eb) => ({ status: 'running', started_at: new Date(), progress: 0, phase: 'loading factors', error: null, attempts: eb('attempts', '+', 1) }))
    .where('id', '=', projectionId)
    .where('status', 'in', ['queued', 'running'])
    .executeTakeFirst();
  // Cancelled between the read above and now.
  if (claimed.numUpdatedRows === 0n) return;

  const controller = new AbortController();
  let lastWrite = 0;
  let pending: Promise<void> = Promise.resolve();
  const report = (progress: number, phase: string, force = false) => {
    const now = Date.now();
    if (!force && now - lastWrite < PROGRESS_INTERVAL_MS) return;
    lastWrite = now;
    pending = pending.then(async () => {
      const row = await db
        .updateTable('projections')
        .set({ progress: Math.min(1, Math.max(0, progress)), phase })
        .where('id', '=', projectionId)
        .returning('status')
        .executeTakeFirst();
      if (!row || row.status === 'cancelled') controller.abort(new Cancelled('cancelled'));
    }).catch((error: unknown) => console.error(`projection ${projectionId}: progress could not be written`, error));
  };

  try {
    const n = factorSet.rows;
    const d = factorSet.dims;
    const values = await readMatrix(db, factorSet.id, 'values', n, d);
    const metric = projection.params.metric === 'cosine' ? 'cosine' : 'euclidean';
    const nNeighbors = typeof projection.params.nNeighbors === 'number' ? projection.params.nNeighbors : 15;
    const scoreFidelity = n <= FIDELITY_MAX_ENTITIES;
    // One graph (lib/projections/knn-cache.ts) at the largest k needed: UMAP's nNeighbors − 1
    // (it counts the point itself), the exact fidelity scores' 50, or the per-point fidelity's 15
    // for larger sets.
    const k = Math.min(n - 1, Math.max(projection.method === 'umap' ? nNeighbors - 1 : 0, scoreFidelity ? Math.max(...FIDELITY_KS, PRESERVATION_K) : PRESERVATION_K));
    report(0.02, 'neighbour graph', true);
    const cached = k >= 1
      ? await factorSetGraph(db, factorSet, values, metric, k, { threads: options.threads, signal: controller.signal, onProgress: (fraction, phase) => report(0.02 + 0.03 * fraction, phase) })
      : undefined;
    const knn = cached?.graph;
    if (controller.signal.aborted) throw new Cancelled('cancelled');

    const layoutShare = 0.8;
    const result = await runProjection({
      data: values,
      n,
      d,
      method: projection.method,
      params: projection.params,
      seed: projection.seed,
      knn: knn && projection.method === 'umap' ? firstNeighbours(knn, Math.min(nNeighbors - 1, knn.k)) : undefined,
      signal: controller.signal,
      threads: options.threads,
      onProgress: (p, phase) => report(0.05 + layoutShare * p, phase),
    });

    let quality: ProjectionQuality | null = null;
    let perPoint: Float32Array | null = null;
    if (scoreFidelity) {
      report(0.05 + layoutShare, 'fidelity scores', true);
      // The scores rank exactly; an approximate graph (a set with many dimensions) is not used
      // for them, and the scoring searches exactly itself. On worker threads, with progress and
      // cancellation (10,000 × 32: ~3 s on two threads).
      const scores = await projectionFidelityParallel(values, n, d, result.coordinates, mulberry32(projection.seed), {
        metric,
        ...(knn && cached?.exact ? { latentKnn: knn } : {}),
        threads: options.threads,
        signal: controller.signal,
        onProgress: (fraction) => report(0.05 + layoutShare + (0.97 - 0.05 - layoutShare) * fraction, 'fidelity scores'),
      });
      const byK = (values: Float64Array) =>
        Object.fromEntries(Array.from(scores.ks, (kk, i) => [String(kk), Number.isFinite(values[i] ?? Number.NaN) ? (values[i] ?? null) : null]));
      quality = {
        trustworthiness: byK(scores.trustworthiness),
        continuity: byK(scores.continuity),
        knnPreservation: scores.knnPreservation,
        shepardRho: scores.shepardRho,
        stress: scores.stress,
        ...(result.explainedVarianceRatio ? { explainedVariance: result.explainedVarianceRatio } : {}),
        ...(result.stress !== undefined ? { sammonStress: result.stress } : {}),
      };
      perPoint = scores.perPoint;
    } else {
      report(0.05 + layoutShare, 'fidelity scores (sampled)', true);
      quality = {
        ...(await sampledProjectionQuality(values, n, d, result.coordinates, metric, mulberry32(projection.seed), (share) => report(0.05 + layoutShare + (0.9 - 0.05 - layoutShare) * share, 'fidelity scores (sampled)'), {
          threads: options.threads,
          signal: controller.signal,
        })),
        ...(result.explainedVarianceRatio ? { explainedVariance: result.explainedVarianceRatio } : {}),
        ...(result.stress !== undefined ? { sammonStress: result.stress } : {}),
      };
      if (controller.signal.aborted) throw new Cancelled('cancelled');
      if (knn) {
        report(0.9, 'per-point fidelity', true);
        perPoint = perPointFidelityFromGraph(knn, result.coordinates, n);
      }
    }
    await pending;
    if (controller.signal.aborted) throw new Cancelled('cancelled');
    await db.transaction().execute(async (tx) => {
      // Status first: if the projection was cancelled meanwhile, nothing of this run is stored.
      const stored = await tx
        .updateTable('projections')
        .set({
          status: 'done',
          progress: 1,
          phase: 'done',
          params: JSON.stringify(result.params),
          quality: quality ? JSON.stringify(quality) : null,
          versions: JSON.stringify({ method: result.libraryVersion, asterism: process.env.npm_package_version ?? 'dev', node: process.version, ...(cached ? { neighbours: cached.method } : {}) }),
          finished_at: new Date(),
          duration_ms: Date.now() - started,
        })
        .where('id', '=', projectionId)
        .where('status', '=', 'running')
        .executeTakeFirst();
      if (stored.numUpdatedRows === 0n) throw new Cancelled('cancelled before the results were stored');
      await tx.deleteFrom('projection_blocks').where('projection_id', '=', projectionId).execute();
      await writeProjectionBlocks(tx, projectionId, 'coords', result.coordinates, n, 2);
      if (perPoint) await writeProjectionBlocks(tx, projectionId, 'fidelity', perPoint, n, 1);
    });
  } catch (error) {
    await pending;
    if (controller.signal.aborted || (error instanceof Error && error.name === 'AbortError')) {
      await db
        .updateTable('projections')
        .set({ status: 'cancelled', phase: 'cancelled', finished_at: new Date() })
        .where('id', '=', projectionId)
        .where('status', 'in', ['running', 'cancelled'])
        .execute();
      return;
    }
    console.error(`projection ${projectionId} failed`, error);
    await db
      .updateTable('projections')
      .set({ status: 'failed', error: error instanceof Error ? error.message : String(error), finished_at: new Date(), duration_ms: Date.now() - started })
      .where('id', '=', projectionId)
      .where('status', '=', 'running')
      .execute();
  }
}
