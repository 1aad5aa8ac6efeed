import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, notFound } from '@/lib/api/errors';
import { validated } from '@/lib/api/route';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { floatsOf } from '@/lib/factor-sets/blocks';
import { enqueueClustering } from '@/lib/jobs/queue';
import { paramsKey } from '@/lib/projections/projections';
import type { User } from '@/lib/users/users';
import { findOrQueue } from '@/lib/jobs/find-or-queue';
import { uuidParam } from '@/lib/validation/common';
import { type Clustering, type ClusteringMethod, findClusteringRow, hdbscanParamsSchema, kMeansParamsSchema, toClustering } from './clusterings';

export interface ClusteringRequest {
  method: ClusteringMethod;
  params?: Record<string, unknown>;
  seed: number;
}

/** Queues a clustering proposal, or returns the live one for the same input, settings and seed. */
export async function requestClustering(db: Kysely<Database>, actor: User, factorSetId: string, input: ClusteringRequest): Promise<{ clustering: Clustering; existing: boolean }> {
  const { factorSet } = await requireFactorSetAccess(db, actor.id, factorSetId, 'projections.run');
  let params: Record<string, unknown>;
  if (input.method === 'hdbscan') {
    const hdbscanParams = validated(hdbscanParamsSchema, input.params ?? {});
    if (hdbscanParams.minClusterSize > factorSet.rows) throw new ApiError(400, 'invalid_params', `minClusterSize must be at most the number of entities (${factorSet.rows})`);
    if ((hdbscanParams.minSamples ?? hdbscanParams.minClusterSize) >= factorSet.rows) {
      throw new ApiError(400, 'invalid_params', `minSamples (default: minClusterSize) must be below the number of entities (${factorSet.rows})`);
    }
    params = hdbscanParams;
  } else if (input.method === 'kmeans') {
    const kMeansParams = validated(kMeansParamsSchema, input.params ?? {});
    if (kMeansParams.kMax >= factorSet.rows) throw new ApiError(400, 'invalid_params', `kMax must be below the number of entities (${factorSet.rows})`);
    params = kMeansParams;
  } else {
    throw new ApiError(400, 'invalid_params', 'method must be "kmeans" or "hdbscan"');
  }
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
  const { row, existing } = await findOrQueue({
    findLive: live,
    insert: () =>
      db
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
        .executeTakeFirstOrThrow(),
    dedupConstraint: 'clusterings_dedup_idx',
    enqueue: (id) => enqueueClustering({ clusteringId: id }),
    recordJob: async (id, jobId) => {
      await db.updateTable('clusterings').set({ job_id: jobId }).where('id', '=', id).execute();
    },
    markRefused: async (id) => {
      await db.updateTable('clusterings').set({ status: 'failed', error: 'the job queue refused the job; request it again' }).where('id', '=', id).execute();
    },
  });
  return { clustering: toClustering(row), existing };
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

/** A factor set's cluster proposals, newest first, without their per-entity arrays. */
export async function listClusteringsFor(db: Kysely<Database>, actor: User, factorSetId: string): Promise<Clustering[]> {
  await requireFactorSetAccess(db, actor.id, factorSetId, 'workspace.view');
  const rows = await db.selectFrom('clusterings').selectAll().where('factor_set_id', '=', factorSetId).orderBy('created_at', 'desc').orderBy('id').execute();
  return rows.map(toClustering);
}
