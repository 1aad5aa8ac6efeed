import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, conflict, notFound } from '@/lib/api/errors';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { cancelJob, enqueueProjection } from '@/lib/jobs/queue';
import { parseProjectionParams, ProjectionParamsError } from '@/lib/projection/params';
import type { Action } from '@/lib/permissions';
import type { User } from '@/lib/users/users';
import { findOrQueue } from '@/lib/jobs/find-or-queue';
import { uuidParam } from '@/lib/validation/common';
import type { ProjectionRequest } from '@/lib/validation/projections';
import { findProjection, paramsKey, type Projection, toProjection } from './projections';

/** A projection is visible to the members of its factor set's workspace; everyone else gets 404. */
export async function requireProjectionAccess(db: Kysely<Database>, actor: User, projectionId: string, action: Action): Promise<Projection> {
  if (!uuidParam.safeParse(projectionId).success) throw notFound('Projection not found');
  const projection = await findProjection(db, projectionId);
  if (!projection) throw notFound('Projection not found');
  await requireFactorSetAccess(db, actor.id, projection.factorSetId, action).catch((error: unknown) => {
    if (error instanceof ApiError && error.status === 404) throw notFound('Projection not found');
    throw error;
  });
  return projection;
}

/**
 * Queues a projection, or returns the live one with the same input checksum, method, settings and
 * seed (the partial unique index makes that hold under concurrent requests too).
 */
export async function requestProjection(
  db: Kysely<Database>,
  actor: User,
  factorSetId: string,
  input: ProjectionRequest,
): Promise<{ projection: Projection; existing: boolean }> {
  const { factorSet } = await requireFactorSetAccess(db, actor.id, factorSetId, 'projections.run');
  let params: Record<string, unknown>;
  try {
    params = { ...parseProjectionParams(input.method, input.params ?? {}, factorSet.rows) };
  } catch (error) {
    if (error instanceof ProjectionParamsError) throw new ApiError(400, 'invalid_params', error.message, error.issues);
    throw error;
  }
  const key = paramsKey(params);
  const live = () =>
    db
      .selectFrom('projections')
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
        .insertInto('projections')
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
    dedupConstraint: 'projections_dedup_idx',
    enqueue: (id) => enqueueProjection({ projectionId: id }),
    recordJob: async (id, jobId) => {
      await db.updateTable('projections').set({ job_id: jobId }).where('id', '=', id).execute();
    },
    markRefused: async (id) => {
      await db.updateTable('projections').set({ status: 'failed', error: 'the job queue refused the job; request it again' }).where('id', '=', id).execute();
    },
  });
  return { projection: toProjection(row), existing };
}

export async function cancelProjection(db: Kysely<Database>, actor: User, projectionId: string): Promise<Projection> {
  const projection = await requireProjectionAccess(db, actor, projectionId, 'projections.run');
  if (projection.status !== 'queued' && projection.status !== 'running') {
    throw conflict('not_running', `The projection is ${projection.status}; only queued or running ones can be cancelled`);
  }
  const row = await db
    .updateTable('projections')
    .set({ status: 'cancelled', phase: 'cancelled', finished_at: new Date() })
    .where('id', '=', projectionId)
    .where('status', 'in', ['queued', 'running'])
    .returningAll()
    .executeTakeFirst();
  if (row?.job_id) await cancelJob(row.job_id).catch((error: unknown) => console.error(`projection ${projectionId}: queue cancel failed`, error));
  const after = await findProjection(db, projectionId);
  if (!after) throw notFound('Projection not found');
  return after;
}

export async function deleteProjection(db: Kysely<Database>, actor: User, projectionId: string): Promise<void> {
  const projection = await requireProjectionAccess(db, actor, projectionId, 'projections.delete');
  if (projection.status === 'queued' || projection.status === 'running') await cancelProjection(db, actor, projectionId);
  await db.deleteFrom('projections').where('id', '=', projectionId).execute();
}
