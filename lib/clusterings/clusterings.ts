import type { Kysely } from 'kysely';
import type { ClusteringRow, Database } from '@/db/types';
import { mulberry32 } from '@/lib/align/random';
import { readMatrix } from '@/lib/factor-sets/blocks';
import { findFactorSet } from '@/lib/factor-sets/factor-sets';
import { silhouetteExcludingNoise } from '@/lib/projection/cluster-silhouette';
import { HDBSCAN_EXACT_MAX_POINTS, HDBSCAN_MIN_GRAPH_K, hdbscan } from '@/lib/projection/hdbscan';
import { chooseKMeans } from '@/lib/projection/kmeans';
import { cachedK, factorSetGraph } from '@/lib/projections/knn-cache';
import type { DbOrTx } from '@/lib/users/users';

export { CLUSTERING_METHODS, type ClusteringMethod, hdbscanParamsSchema, kMeansParamsSchema } from '@/lib/validation/clusterings';
import { type ClusteringMethod, hdbscanParamsSchema, kMeansParamsSchema } from '@/lib/validation/clusterings';

export interface Clustering {
  id: string;
  factorSetId: string;
  method: ClusteringMethod;
  params: Record<string, unknown>;
  seed: number;
  status: ClusteringRow['status'];
  progress: number;
  phase: string | null;
  error: string | null;
  /** k-means: the k chosen; HDBSCAN: the number of clusters found. */
  k: number | null;
  /** Mean silhouette per k tried (HDBSCAN: one entry, for the clusters found, noise excluded). */
  scores: Record<string, number> | null;
  meanSilhouette: number | null;
  inputChecksum: string;
  createdAt: Date;
  durationMs: number | null;
}

export function toClustering(row: ClusteringRow): Clustering {
  return {
    id: row.id,
    factorSetId: row.factor_set_id,
    method: row.method,
    params: row.params as Record<string, unknown>,
    seed: row.seed,
    status: row.status,
    progress: row.progress,
    phase: row.phase,
    error: row.error,
    k: row.k,
    scores: (row.scores ?? null) as Record<string, number> | null,
    meanSilhouette: row.mean_silhouette,
    inputChecksum: row.input_checksum,
    createdAt: row.created_at,
    durationMs: row.duration_ms,
  };
}

export async function findClusteringRow(db: DbOrTx, id: string): Promise<ClusteringRow | undefined> {
  return db.selectFrom('clusterings').selectAll().where('id', '=', id).executeTakeFirst();
}

/** What a clustering run stores. */
interface ClusteringOutcome {
  k: number;
  scores: Record<string, number>;
  meanSilhouette: number | null;
  labels: Int32Array;
  silhouette: Float32Array;
  phase: string;
}

function throttled(db: Kysely<Database>, clusteringId: string, writes: Promise<unknown>[]): (share: number, phase: string) => void {
  let lastWrite = 0;
  return (share, phase) => {
    if (Date.now() - lastWrite < 400) return;
    lastWrite = Date.now();
    writes.push(db.updateTable('clusterings').set({ progress: share, phase }).where('id', '=', clusteringId).execute());
  };
}

/**
 * Runs one clustering job in the full latent space; failures are recorded, not retried.
 *
 * - kmeans: k from kMin to kMax, the highest mean silhouette wins (lib/projection/kmeans.ts).
 * - hdbscan: lib/projection/hdbscan.ts, with core distances from the factor set's cached
 *   Euclidean neighbour graph (lib/projections/knn-cache.ts); labels −1 are noise. Silhouettes
 *   leave noise out (lib/projection/cluster-silhouette.ts explains why): noise entities store NaN
 *   (null in JSON), and the phase reports the noise share beside the mean.
 */
export async function runClusteringJob(db: Kysely<Database>, clusteringId: string): Promise<void> {
  const row = await findClusteringRow(db, clusteringId);
  if (!row || row.status === 'done' || row.status === 'cancelled') return;
  const factorSet = await findFactorSet(db, row.factor_set_id);
  if (!factorSet) return;
  const started = Date.now();
  await db.updateTable('clusterings').set({ status: 'running', phase: 'loading factors', progress: 0 }).where('id', '=', clusteringId).execute();
  const writes: Promise<unknown>[] = [];
  try {
    const values = await readMatrix(db, factorSet.id, 'values', factorSet.rows, factorSet.dims);
    const onProgress = throttled(db, clusteringId, writes);
    const n = factorSet.rows;
    const d = factorSet.dims;
    let outcome: ClusteringOutcome;
    if (row.method === 'hdbscan') {
      const params = hdbscanParamsSchema.parse(row.params);
      const minSamples = params.minSamples ?? params.minClusterSize;
      // The graph serves the core distances (k = minSamples − 1) and, above the exact limit, the
      // spanning tree (k ≥ HDBSCAN_MIN_GRAPH_K).
      const large = n > HDBSCAN_EXACT_MAX_POINTS;
      const needK = Math.min(n - 1, Math.max(minSamples - 1, large ? HDBSCAN_MIN_GRAPH_K : 1));
      onProgress(0, 'neighbour graph');
      // Below the exact limit a graph beyond the cached k would be a one-off search as costly as
      // hdbscan's own core-distance pass, so only the cached graph is used there.
      const cached = large || needK <= cachedK(n, d) ? await factorSetGraph(db, factorSet, values, 'euclidean', needK, { onProgress: (share, phase) => onProgress(0.1 * share, phase) }) : undefined;
      // An approximate graph's core distances are slightly too large where it missed a neighbour;
      // below the exact limit the direct pass is used instead.
      const knn = cached && (cached.exact || large) ? cached.graph : undefined;
      const result = hdbscan(values, n, d, { minClusterSize: params.minClusterSize, minSamples }, { ...(knn ? { knn } : {}), onProgress: (share, phase) => onProgress(0.1 + 0.8 * share, phase) });
      onProgress(0.9, 'silhouettes');
      const silhouette = silhouetteExcludingNoise(values, n, d, result.labels, result.clusters, mulberry32(row.seed));
      const noise = `${(100 * result.noiseShare).toFixed(1)}% noise`;
      outcome = {
        k: result.clusters,
        scores: silhouette.mean !== null ? { [String(result.clusters)]: silhouette.mean } : {},
        meanSilhouette: silhouette.mean,
        labels: result.labels,
        silhouette: silhouette.perPoint,
        phase: `done (${result.clusters} clusters, ${noise}${silhouette.sampled ? '; silhouette on a sample of 5,000 clustered entities' : ''})`,
      };
    } else {
      const params = kMeansParamsSchema.parse(row.params);
      const chosen = chooseKMeans(values, n, d, params, mulberry32(row.seed), { maxIterations: params.maxIterations, restarts: params.restarts, onProgress });
      outcome = {
        k: chosen.k,
        scores: chosen.scores,
        meanSilhouette: chosen.scores[String(chosen.k)] ?? null,
        labels: chosen.labels,
        silhouette: chosen.silhouette,
        phase: chosen.sampled ? 'done (silhouette on a sample of 5,000 entities)' : 'done',
      };
    }
    await Promise.all(writes);
    await db
      .updateTable('clusterings')
      .set({
        status: 'done',
        progress: 1,
        phase: outcome.phase,
        k: outcome.k,
        scores: JSON.stringify(outcome.scores),
        mean_silhouette: outcome.meanSilhouette,
        labels: Buffer.from(outcome.labels.buffer, outcome.labels.byteOffset, outcome.labels.byteLength),
        silhouette: Buffer.from(outcome.silhouette.buffer, outcome.silhouette.byteOffset, outcome.silhouette.byteLength),
        finished_at: new Date(),
        duration_ms: Date.now() - started,
      })
      .where('id', '=', clusteringId)
      .where('status', '=', 'running')
      .execute();
  } catch (error) {
    await Promise.allSettled(writes);
    console.error(`clustering ${clusteringId} failed`, error);
    await db
      .updateTable('clusterings')
      .set({ status: 'failed', error: error instanceof Error ? error.message : String(error), finished_at: new Date(), duration_ms: Date.now() - started })
      .where('id', '=', clusteringId)
      .execute();
  }
}
