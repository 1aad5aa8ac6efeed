import { type ChildProcess, spawn } from 'node:child_process';
import { beforeAll, describe, expect, inject, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { api } from '../support/api';
import { type RoleFixture, workspaceWithEveryRole } from '../support/fixtures';
import { upload, wideCsv } from '../support/uploads';

interface WireProjection {
  id: string;
  status: string;
  progress: number;
  phase: string | null;
  error: string | null;
  attempts: number;
  quality: { trustworthiness: Record<string, number> } | null;
}

/**
 * A worker that dies mid-job (SIGKILL: no chance to clean up) leaves its job active; once the job's
 * time limit passes (JOB_EXPIRE_SECONDS, 30 s under npm test) the queue's supervisor fails it and
 * another worker runs it again from the start. The suite's own worker is paused while ours takes
 * the job, so we know which one to kill.
 */
describe('a worker killed mid-job', () => {
  let f: RoleFixture;
  let factorSetId: string;
  const n = 2000;
  const d = 8;

  beforeAll(async () => {
    f = await workspaceWithEveryRole('Worker death fixture');
    const normal = normalGenerator(mulberry32(11));
    const values = new Float32Array(n * d);
    for (let i = 0; i < n; i += 1) for (let c = 0; c < d; c += 1) values[i * d + c] = (i % 4) * 3 * (c === i % 4 ? 1 : 0) + normal();
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(Array.from({ length: n }, (_, i) => `r${i}`), values, d), filename: 'blobs.csv' },
    });
    expect(created.status).toBe(201);
    factorSetId = created.body.id;
  });

  const read = async (id: string) => (await api<WireProjection>('GET', `/api/projections/${id}`, { token: f.members.viewer.token })).body;

  it('is noticed after the time limit, and another worker completes the job', async () => {
    const suiteWorker = inject('workerProcessGroup');
    let doomed: ChildProcess | undefined;
    let projectionId = '';
    process.kill(-suiteWorker, 'SIGSTOP');
    try {
      doomed = spawn('npx', ['tsx', '--conditions=react-server', 'scripts/worker.ts'], { env: process.env, detached: true, stdio: 'ignore' });
      const queued = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, {
        token: f.members.analyst.token,
        body: { method: 'sammon', params: { maxIterations: 150, tolerance: 1e-9 }, seed: 3 },
      });
      expect(queued.status).toBe(202);
      projectionId = queued.body.id;
      const deadline = Date.now() + 60_000;
      for (;;) {
        const p = await read(projectionId);
        // Past loading: the layout is being computed when the worker dies.
        if (p.status === 'running' && p.progress > 0.05) break;
        if (p.status === 'done' || p.status === 'failed') throw new Error(`the job ended (${p.status}) before the worker could be killed`);
        if (Date.now() > deadline) throw new Error(`our worker never took the job (${p.status}, ${p.phase})`);
        await new Promise((r) => setTimeout(r, 50));
      }
      if (doomed.pid !== undefined) process.kill(-doomed.pid, 'SIGKILL');
    } finally {
      process.kill(-suiteWorker, 'SIGCONT');
      if (doomed?.pid !== undefined && doomed.exitCode === null) {
        try {
          process.kill(-doomed.pid, 'SIGKILL');
        } catch (error) {
          // Already gone: the kill above reached the whole group.
          if ((error as NodeJS.ErrnoException).code !== 'ESRCH') throw error;
        }
      }
    }
    const killedAt = Date.now();
    const stalled = await read(projectionId);
    expect(stalled.status).toBe('running');
    expect(stalled.attempts).toBe(1);

    const deadline = Date.now() + 150_000;
    let last = stalled;
    while (last.status !== 'done' && last.status !== 'failed' && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 500));
      last = await read(projectionId);
    }
    expect(last.status, last.error ?? '').toBe('done');
    expect(last.attempts).toBe(2);
    expect(last.quality?.trustworthiness['15']).toBeGreaterThan(0.8);
    console.info(`killed worker's job completed by another ${((Date.now() - killedAt) / 1000).toFixed(1)} s after the kill`);
  }, 240_000);
});
