/**
 * A projection worker: takes jobs from the queue in PostgreSQL and runs them. `npm start` starts
 * WORKERS of them (default 1); more may run on other machines against the same database.
 * Run with `tsx --conditions=react-server` (server modules refuse to load otherwise).
 */
import { availableParallelism } from 'node:os';
import { createDb } from '../db/connection';
import { CLUSTERING_QUEUE, type ClusteringJob, PROJECTION_QUEUE, type ProjectionJob, startBoss } from '../lib/jobs/boss';
import { runClusteringJob } from '../lib/clusterings/clusterings';
import { runProjectionJob } from '../lib/projections/run-job';
import { FIT_QUEUE, type FitJob, PROJECTION_JOB_OPTIONS } from '../lib/jobs/boss';
import { runFitJob } from '../lib/fits/run-job';

const url = process.env.DATABASE_URL;
if (!url) {
  console.error('worker: DATABASE_URL is not set');
  process.exit(1);
}
const threads = Number(process.env.WORKER_THREADS ?? availableParallelism());
const db = createDb(url, 4);
const boss = await startBoss(url, { supervise: true });

await boss.work<ProjectionJob>(PROJECTION_QUEUE, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
  if (!job) return;
  await runProjectionJob(db, job.data.projectionId, { threads });
});
await boss.work<ClusteringJob>(CLUSTERING_QUEUE, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
  if (!job) return;
  await runClusteringJob(db, job.data.clusteringId);
});
await boss.work<FitJob>(FIT_QUEUE, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
  if (!job) return;
  await runFitJob(db, job.data.fitId, { threads, enqueueProjection: (projectionId) => boss.send(PROJECTION_QUEUE, { projectionId }, PROJECTION_JOB_OPTIONS) });
});
console.log(`worker: taking projection and clustering jobs (${threads} threads for neighbour search)`);

let stopping = false;
async function stop(): Promise<void> {
  if (stopping) return;
  stopping = true;
  // Graceful: the running job may finish within the timeout; otherwise the queue retries it later.
  await boss.stop({ graceful: true, timeout: 10_000 }).catch((error: unknown) => console.error('worker: stop failed', error));
  await db.destroy();
  process.exit(0);
}
process.on('SIGINT', () => void stop());
process.on('SIGTERM', () => void stop());
