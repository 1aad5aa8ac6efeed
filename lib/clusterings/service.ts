import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, notFound } from '@/lib/api/errors';
import { validated } from '@/lib/api/route';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { floatsOf } from '@/lib/factor-sets/blocks';
import { enqueueClustering } from '@/lib/jobs/queue';
import { paramsKey } from '@/lib/projections/projections';
import { isUniqueViolation, type User } from '@/lib/users/users';
import { uuidParam } from '@/lib/validation/common';
import { type Clustering, findClusteringRow, kMeansParamsSchema, toClustering } from './clusterings';

export interface ClusteringRequest {
  method: 'kmeans';
  params?: Record<string, unknown>;
  seed: number;
}

/** Queues a clustering proposal, or returns the live one for the same input, settings and seed. */
export async function requestClustering(db: Kysely<Database>, actor: User, factorSetId: string, input: ClusteringRequest): Promise<{ clustering: Clustering; existing: boolean }> {
  const { factorSet } = await requireFactorSetAccess(db, actor.id, factorSetId, 'projections.run');
  const params = validated(kMeansParamsSchema, input.params ?? {});
  if (params.kMax >= factorSet.rows) throw new ApiError(400, 'invalid_params', `kMax must be below the number of entities (${factorSet.rows})`);
  const key = paramsKey(params);
  const live = () =>
    db
      .selectFrom('clusterings')
      .selectAll()
      .where('factor_set_id', '=', factorSet.id)
      .where('input_checksum', '=', factorSet.checksumSha256)
      .where('method', '=', input.method)
      .where('params_key', '=', key)
      .where('seed', '=', input.seed)
      .where('status', 'in', ['queued', 'running', 'done'])
      .executeTakeFirst();
  const found = await live();
  if (found) return { clustering: toClustering(found), existing: true };
  let row;
  try {
    row = await db
      .insertInto('clusterings')
      .values({
        factor_set_id: factorSet.id,
        method: input.method,
        params: JSON.stringify(params),
        params_key: key,
        seed: input.seed,
        input_checksum: factorSet.checksumSha256,
        status: 'queued',
        phase: 'queued',
        created_by: actor.id,
      })
      .returningAll()
      .executeTakeFirstOrThrow();
  } catch (error) {
    const raced = isUniqueViolation(error, 'clusterings_dedup_idx') ? await live() : undefined;
    if (raced) return { clustering: toClustering(raced), existing: true };
    throw error;
  }
  try {
    const jobId = await enqueueClustering({ clusteringId: row.id });
    await db.updateTable('clusterings').set({ job_id: jobId }).where('id', '=', row.id).execute();
  } catch (error) {
    // Without a job nobody would ever run it: mark it failed (never left queued, never vanishing
    // under a concurrent identical request that has just been handed this id).
    await db.updateTable('clusterings').set({ status: 'failed', error: 'the job queue refused the job; request it again' }).where('id', '=', row.id).execute();
    throw error;
  }
  return { clustering: toClustering(row), existing: false };
}

/** The clustering with its per-entity labels and silhouettes once done. */
export async function clusteringForReader(db: Kysely<Database>, actor: User, id: string): Promise<Clustering & { labels: number[] | null; silhouette: number[] | null }> {
  const row = uuidParam.safeParse(id).success ? await findClusteringRow(db, id) : undefined;
  if (!row) throw notFound('Clustering not found');
  await requireFactorSetAccess(db, actor.id, row.factor_set_id, 'workspace.view').catch((error: unknown) => {
    if (error instanceof ApiError && error.status === 404) throw notFound('Clustering not found');
    throw error;
  });
  const labels = row.labels ? Array.from(new Int32Array(row.labels.buffer.slice(row.labels.byteOffset, row.labels.byteOffset + row.labels.byteLength))) : null;
  const silhouette = row.silhouette ? Array.from(floatsOf(row.silhouette)) : null;
  return { ...toClustering(row), labels, silhouette };
}
