import PgBoss from 'pg-boss';
import { z } from 'zod';

/**
 * Two queue timings may be shortened by the environment, for the test that kills a worker mid-job
 * (a dead worker is noticed only when its job's time limit passes and the supervisor next runs):
 * JOB_EXPIRE_SECONDS (projection and clustering jobs' time limit, default 3600) and
 * JOB_MAINTENANCE_SECONDS (how often the supervisor runs, pg-boss's default 120). Both must be set
 * alike for the web server (which sends jobs) and the workers.
 */
const timingSchema = z.object({
  JOB_EXPIRE_SECONDS: z.coerce.number().int().min(5).max(24 * 60 * 60).default(60 * 60),
  JOB_MAINTENANCE_SECONDS: z.coerce.number().int().min(1).max(3600).default(120),
});
const timing = timingSchema.parse({ JOB_EXPIRE_SECONDS: process.env.JOB_EXPIRE_SECONDS || undefined, JOB_MAINTENANCE_SECONDS: process.env.JOB_MAINTENANCE_SECONDS || undefined });

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
export const PROJECTION_JOB_OPTIONS = { retryLimit: 2, retryDelay: 5, expireInSeconds: timing.JOB_EXPIRE_SECONDS } as const;

/**
 * Fits: a large variational fit with cross-validation can run for hours, and the time limit must
 * not fail a healthy job, so a dead worker is noticed later (after 6 hours); one retry, because a
 * fit that died twice most likely ran out of memory and would again.
 */
export const FIT_JOB_OPTIONS = { retryLimit: 1, retryDelay: 5, expireInSeconds: 6 * 60 * 60 } as const;

export async function startBoss(connectionString: string, options: { supervise: boolean }): Promise<PgBoss> {
  const boss = new PgBoss({ connectionString, schema: 'pgboss', max: 4, supervise: options.supervise, schedule: false, maintenanceIntervalSeconds: timing.JOB_MAINTENANCE_SECONDS });
  boss.on('error', (error) => console.error('job queue:', error));
  await boss.start();
  for (const name of [PROJECTION_QUEUE, CLUSTERING_QUEUE]) {
    await boss.createQueue(name, { name, policy: 'standard', ...PROJECTION_JOB_OPTIONS });
  }
  await boss.createQueue(FIT_QUEUE, { name: FIT_QUEUE, policy: 'standard', ...FIT_JOB_OPTIONS });
  return boss;
}
