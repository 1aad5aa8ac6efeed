import 'server-only';
import type PgBoss from 'pg-boss';
import { serverEnv } from '@/lib/env';
import { CLUSTERING_QUEUE, type ClusteringJob, FIT_JOB_OPTIONS, FIT_QUEUE, type FitJob, PROJECTION_JOB_OPTIONS, PROJECTION_QUEUE, type ProjectionJob, startBoss } from './boss';

const globalForBoss = globalThis as unknown as { asterismBoss?: Promise<PgBoss> };

/** The web server's handle on the queue: it only sends and cancels; workers (scripts/worker.ts) run jobs. */
function boss(): Promise<PgBoss> {
  globalForBoss.asterismBoss ??= startBoss(serverEnv().DATABASE_URL, { supervise: false }).catch((error: unknown) => {
    globalForBoss.asterismBoss = undefined;
    throw error;
  });
  return globalForBoss.asterismBoss;
}

async function enqueue(queue: string, job: object, options: PgBoss.SendOptions = PROJECTION_JOB_OPTIONS): Promise<string> {
  const id = await (await boss()).send(queue, job, options);
  if (!id) throw new Error(`the job queue refused the ${queue} job`);
  return id;
}

export function enqueueProjection(job: ProjectionJob): Promise<string> {
  return enqueue(PROJECTION_QUEUE, job);
}

export function enqueueClustering(job: ClusteringJob): Promise<string> {
  return enqueue(CLUSTERING_QUEUE, job);
}

export function enqueueFit(job: FitJob): Promise<string> {
  return enqueue(FIT_QUEUE, job, FIT_JOB_OPTIONS);
}

export async function cancelJob(jobId: string, queue: string = PROJECTION_QUEUE): Promise<void> {
  await (await boss()).cancel(queue, jobId);
}

/** For scripts (the demo seed) that queue work and then exit. */
export async function stopQueue(): Promise<void> {
  const running = globalForBoss.asterismBoss;
  globalForBoss.asterismBoss = undefined;
  if (running) await (await running).stop({ graceful: true, timeout: 5_000 });
}
