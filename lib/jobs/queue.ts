import 'server-only';
import type PgBoss from 'pg-boss';
import { serverEnv } from '@/lib/env';
import { PROJECTION_JOB_OPTIONS, PROJECTION_QUEUE, type ProjectionJob, startBoss } from './boss';

const globalForBoss = globalThis as unknown as { asterismBoss?: Promise<PgBoss> };

/** The web server's handle on the queue: it only sends and cancels; workers (scripts/worker.ts) run jobs. */
function boss(): Promise<PgBoss> {
  globalForBoss.asterismBoss ??= startBoss(serverEnv().DATABASE_URL, { supervise: false }).catch((error: unknown) => {
    globalForBoss.asterismBoss = undefined;
    throw error;
  });
  return globalForBoss.asterismBoss;
}

export async function enqueueProjection(job: ProjectionJob): Promise<string> {
  const id = await (await boss()).send(PROJECTION_QUEUE, job, PROJECTION_JOB_OPTIONS);
  if (!id) throw new Error('the job queue refused the projection job');
  return id;
}

export async function cancelJob(jobId: string): Promise<void> {
  await (await boss()).cancel(PROJECTION_QUEUE, jobId);
}

/** For scripts (the demo seed) that queue work and then exit. */
export async function stopQueue(): Promise<void> {
  const running = globalForBoss.asterismBoss;
  globalForBoss.asterismBoss = undefined;
  if (running) await (await running).stop({ graceful: true, timeout: 5_000 });
}
