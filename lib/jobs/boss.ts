import PgBoss from 'pg-boss';

/** The job queue lives in the same PostgreSQL, in its own schema; any number of workers on any machine may share it. */
export const PROJECTION_QUEUE = 'projection';
export const CLUSTERING_QUEUE = 'clustering';
export const FIT_QUEUE = 'fit';

export interface ProjectionJob {
  projectionId: string;
}

export interface ClusteringJob {
  clusteringId: string;
}

export interface FitJob {
  fitId: string;
}

/**
 * Queue policy. The time limit is also how a dead worker is noticed: a job still active after
 * `expireInSeconds` is failed by pg-boss's supervisor and retried (up to `retryLimit`) by another.
 */
export const PROJECTION_JOB_OPTIONS = { retryLimit: 2, retryDelay: 5, expireInSeconds: 60 * 60 } as const;

/**
 * Fits: a large variational fit with cross-validation can run for hours, and the time limit must
 * not fail a healthy job, so a dead worker is noticed later (after 6 hours); one retry, because a
 * fit that died twice most likely ran out of memory and would again.
 */
export const FIT_JOB_OPTIONS = { retryLimit: 1, retryDelay: 5, expireInSeconds: 6 * 60 * 60 } as const;

export async function startBoss(connectionString: string, options: { supervise: boolean }): Promise<PgBoss> {
  const boss = new PgBoss({ connectionString, schema: 'pgboss', max: 4, supervise: options.supervise, schedule: false });
  boss.on('error', (error) => console.error('job queue:', error));
  await boss.start();
  for (const name of [PROJECTION_QUEUE, CLUSTERING_QUEUE]) {
    await boss.createQueue(name, { name, policy: 'standard', ...PROJECTION_JOB_OPTIONS });
  }
  await boss.createQueue(FIT_QUEUE, { name: FIT_QUEUE, policy: 'standard', ...FIT_JOB_OPTIONS });
  return boss;
}
