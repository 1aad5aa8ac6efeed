import type { Kysely } from 'kysely';
import { z } from 'zod';
import type { ClusteringRow, Database } from '@/db/types';
import { mulberry32 } from '@/lib/align/random';
import { readMatrix } from '@/lib/factor-sets/blocks';
import { findFactorSet } from '@/lib/factor-sets/factor-sets';
import { chooseKMeans } from '@/lib/projection/kmeans';
import type { DbOrTx } from '@/lib/users/users';

/** k-means settings: the range of k tried (the silhouette picks one), Lloyd iterations and restarts. */
export const kMeansParamsSchema = z
  .strictObject({
    kMin: z.number().int().min(2, 'kMin must be at least 2').max(50).default(2),
    kMax: z.number().int().min(2).max(50, 'kMax must be at most 50').default(10),
    maxIterations: z.number().int().min(1).max(1000).default(100),
    restarts: z.number().int().min(1).max(100).default(10),
  })
  .refine((p) => p.kMin <= p.kMax, { error: 'kMin must not exceed kMax', path: ['kMin'] });

export interface Clustering {
  id: string;
  factorSetId: string;
  method: 'kmeans';
  params: Record<string, unknown>;
  seed: number;
  status: ClusteringRow['status'];
  progress: number;
  phase: string | null;
  error: string | null;
  k: number | null;
  /** Mean silhouette per k tried. */
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

/** Runs one clustering job in the full latent space; failures are recorded, not retried. */
export async function runClusteringJob(db: Kysely<Database>, clusteringId: string): Promise<void> {
  const row = await findClusteringRow(db, clusteringId);
  if (!row || row.status === 'done' || row.status === 'cancelled') return;
  const factorSet = await findFactorSet(db, row.factor_set_id);
  if (!factorSet) return;
  const started = Date.now();
  await db.updateTable('clusterings').set({ status: 'running', phase: 'loading factors', progress: 0 }).where('id', '=', clusteringId).execute();
  const writes: Promise<unknown>[] = [];
  try {
    const params = kMeansParamsSchema.parse(row.params);
    const values = await readMatrix(db, factorSet.id, 'values', factorSet.rows, factorSet.dims);
    let lastWrite = 0;
    const chosen = chooseKMeans(values, factorSet.rows, factorSet.dims, params, mulberry32(row.seed), {
      maxIterations: params.maxIterations,
      restarts: params.restarts,
      onProgress: (share, phase) => {
        if (Date.now() - lastWrite < 400) return;
        lastWrite = Date.now();
        writes.push(db.updateTable('clusterings').set({ progress: share, phase }).where('id', '=', clusteringId).execute());
      },
    });
    await Promise.all(writes);
    const mean = chosen.scores[String(chosen.k)] ?? null;
    await db
      .updateTable('clusterings')
      .set({
        status: 'done',
        progress: 1,
        phase: chosen.sampled ? 'done (silhouette on a sample of 5,000 entities)' : 'done',
        k: chosen.k,
        scores: JSON.stringify(chosen.scores),
        mean_silhouette: mean,
        labels: Buffer.from(chosen.labels.buffer, chosen.labels.byteOffset, chosen.labels.byteLength),
        silhouette: Buffer.from(chosen.silhouette.buffer, chosen.silhouette.byteOffset, chosen.silhouette.byteLength),
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
