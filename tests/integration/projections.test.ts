import { beforeAll, describe, expect, it } from 'vitest';
import { projectionFidelity } from '@/lib/projection/fidelity';
import { fitPca, transformPca } from '@/lib/projection/pca';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { api } from '../support/api';
import { testConfig } from '../support/config';
import { type RoleFixture, workspaceWithEveryRole } from '../support/fixtures';
import { upload, wideCsv } from '../support/uploads';

interface WireProjection {
  id: string;
  status: string;
  progress: number;
  phase: string | null;
  error: string | null;
  params: Record<string, unknown>;
  quality: { trustworthiness: Record<string, number>; continuity: Record<string, number>; knnPreservation: number; shepardRho: number; stress: number; explainedVariance?: number[] } | null;
  inputChecksum: string;
  versions: Record<string, string> | null;
  durationMs: number | null;
}

/** Three seeded Gaussian clusters in 5-D: structure every method should keep. */
function mixture(n: number, d: number, seed: number): Float32Array {
  const normal = normalGenerator(mulberry32(seed));
  const centres = [0, 1, 2].map(() => Array.from({ length: d }, () => normal() * 4));
  const out = new Float32Array(n * d);
  for (let i = 0; i < n; i += 1) for (let c = 0; c < d; c += 1) out[i * d + c] = (centres[i % 3]?.[c] ?? 0) + normal();
  return out;
}

async function binary(path: string, token: string): Promise<Float32Array> {
  const response = await fetch(`${testConfig().baseUrl}${path}`, { headers: { Authorization: `Bearer ${token}` } });
  expect(response.status).toBe(200);
  const bytes = new Uint8Array(await response.arrayBuffer());
  return new Float32Array(bytes.buffer, bytes.byteOffset, bytes.byteLength / 4);
}

async function until(id: string, token: string, done: (p: WireProjection) => boolean, timeoutMs = 60_000): Promise<WireProjection> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const answer = await api<WireProjection>('GET', `/api/projections/${id}`, { token });
    if (done(answer.body)) return answer.body;
    if (Date.now() > deadline) throw new Error(`projection ${id} still ${answer.body.status} (${answer.body.phase})`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

const finished = (p: WireProjection) => p.status === 'done' || p.status === 'failed' || p.status === 'cancelled';

describe('projections on the job queue', () => {
  let f: RoleFixture;
  let factorSetId: string;
  const n = 150;
  const d = 5;
  const values = mixture(n, d, 7);

  beforeAll(async () => {
    f = await workspaceWithEveryRole('Projection fixture');
    const ids = Array.from({ length: n }, (_, i) => `p${i}`);
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(ids, values, d), filename: 'mixture.csv' },
    });
    expect(created.status).toBe(201);
    factorSetId = created.body.id;
  });

  it('runs PCA as a job, stores coordinates equal to our PCA of the stored values, and scores fidelity', async () => {
    const queued = await api<{ id: string; status: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, {
      token: f.members.analyst.token,
      body: { method: 'pca', params: {}, seed: 1 },
    });
    expect(queued.status).toBe(202);
    expect(queued.body.status).toBe('queued');
    const done = await until(queued.body.id, f.members.viewer.token, finished);
    expect(done.status, done.error ?? '').toBe('done');
    expect(done.progress).toBe(1);
    expect(Object.keys(done.quality?.trustworthiness ?? {})).toEqual(['5', '15', '50']);
    expect(done.quality?.trustworthiness['15']).toBeGreaterThan(0.9);
    expect(done.quality?.explainedVariance).toHaveLength(2);
    expect(done.versions?.method).toBeTruthy();

    const coords = await binary(`/api/projections/${done.id}/coords`, f.members.viewer.token);
    expect(coords.length).toBe(n * 2);
    const expected = transformPca(fitPca(values, n, d, { components: 2 }), values, n);
    for (let i = 0; i < n * 2; i += 1) expect(Math.abs((coords[i] ?? 0) - (expected[i] ?? 0))).toBeLessThan(1e-4);
    const fidelity = await binary(`/api/projections/${done.id}/fidelity`, f.members.viewer.token);
    expect(fidelity.length).toBe(n);
    expect(fidelity.every((v) => v >= 0 && v <= 1)).toBe(true);

    const again = await api<{ id: string; existing: boolean }>('POST', `/api/factor-sets/${factorSetId}/projections`, {
      token: f.members.owner.token,
      body: { method: 'pca', params: { standardise: false }, seed: 1 },
    });
    expect(again.status).toBe(200);
    expect(again.body).toMatchObject({ id: done.id, existing: true });

    const list = await api<{ items: { id: string }[] }>('GET', `/api/factor-sets/${factorSetId}/projections`, { token: f.members.reviewer.token });
    expect(list.body.items.map((p) => p.id)).toContain(done.id);
  });

  it('UMAP with the same seed is reproducible bit for bit; a different seed gives another layout', async () => {
    const run = async (seed: number) => {
      const queued = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, {
        token: f.members.analyst.token,
        body: { method: 'umap', params: { nNeighbors: 10, nEpochs: 100 }, seed },
      });
      expect(queued.status).toBe(202);
      const done = await until(queued.body.id, f.members.analyst.token, finished);
      expect(done.status, done.error ?? '').toBe('done');
      return { id: done.id, coords: await binary(`/api/projections/${done.id}/coords`, f.members.analyst.token), done };
    };
    const first = await run(11);
    expect(first.done.quality?.trustworthiness['15']).toBeGreaterThan(0.9);
    expect((await api('DELETE', `/api/projections/${first.id}`, { token: f.members.analyst.token })).status).toBe(204);
    const second = await run(11);
    expect(second.id).not.toBe(first.id);
    expect(Array.from(new Uint32Array(second.coords.buffer))).toEqual(Array.from(new Uint32Array(first.coords.buffer)));
    const other = await run(12);
    expect(Array.from(other.coords)).not.toEqual(Array.from(second.coords));
  }, 120_000);

  it('cancels a running job', async () => {
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, {
      token: f.members.analyst.token,
      body: { method: 'tsne', params: { iterations: 5000, perplexity: 20 }, seed: 3 },
    });
    expect(queued.status).toBe(202);
    await until(queued.body.id, f.members.analyst.token, (p) => p.status === 'running' || finished(p));
    const cancelled = await api<WireProjection>('POST', `/api/projections/${queued.body.id}/cancel`, { token: f.members.analyst.token });
    expect(cancelled.status).toBe(200);
    expect(cancelled.body.status).toBe('cancelled');
    const settled = await until(queued.body.id, f.members.analyst.token, (p) => p.phase === 'cancelled');
    expect(settled.status).toBe('cancelled');
    // The worker is free again: a new job completes.
    const next = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, {
      token: f.members.analyst.token,
      body: { method: 'pca', params: { standardise: true }, seed: 1 },
    });
    expect((await until(next.body.id, f.members.analyst.token, finished)).status).toBe('done');
  }, 120_000);

  it('proposes clusters by k-means in the full latent space, k chosen by silhouette', async () => {
    const queued = await api<{ id: string; status: string }>('POST', `/api/factor-sets/${factorSetId}/clusters`, {
      token: f.members.analyst.token,
      body: { method: 'kmeans', params: { kMin: 2, kMax: 6 }, seed: 5 },
    });
    expect(queued.status, JSON.stringify(queued.body)).toBe(202);
    const deadline = Date.now() + 60_000;
    let body: { status: string; k: number; labels: number[]; silhouette: number[]; scores: Record<string, number>; error: string | null };
    for (;;) {
      body = (await api<typeof body>('GET', `/api/clusterings/${queued.body.id}`, { token: f.members.viewer.token })).body;
      if (body.status !== 'queued' && body.status !== 'running') break;
      if (Date.now() > deadline) throw new Error('clustering did not finish');
      await new Promise((r) => setTimeout(r, 250));
    }
    expect(body.status, body.error ?? '').toBe('done');
    expect(body.k).toBe(3);
    expect(Object.keys(body.scores)).toEqual(['2', '3', '4', '5', '6']);
    expect(body.labels).toHaveLength(n);
    const byTruth = new Map<number, Set<number>>();
    body.labels.forEach((label, i) => byTruth.set(i % 3, (byTruth.get(i % 3) ?? new Set()).add(label)));
    expect([...byTruth.values()].every((labels) => labels.size === 1)).toBe(true);
    expect(body.silhouette.every((v) => v >= -1 && v <= 1)).toBe(true);

    const again = await api<{ id: string; existing: boolean }>('POST', `/api/factor-sets/${factorSetId}/clusters`, {
      token: f.members.owner.token,
      body: { method: 'kmeans', params: { kMax: 6, kMin: 2 }, seed: 5 },
    });
    expect(again.body).toMatchObject({ id: queued.body.id, existing: true });
    expect((await api('POST', `/api/factor-sets/${factorSetId}/clusters`, { token: f.members.expert.token, body: { method: 'kmeans', seed: 1 } })).status).toBe(403);
    expect((await api('GET', `/api/clusterings/${queued.body.id}`, { token: f.outsider.token })).status).toBe(404);
    expect((await api('POST', `/api/factor-sets/${factorSetId}/clusters`, { token: f.members.analyst.token, body: { method: 'dbscan', seed: 1 } })).status).toBe(400);
  }, 90_000);

  it('proposes clusters by HDBSCAN: noise labelled −1 with a null silhouette, the three blobs found', async () => {
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/clusters`, {
      token: f.members.analyst.token,
      body: { method: 'hdbscan', params: { minClusterSize: 10 }, seed: 1 },
    });
    expect(queued.status).toBe(202);
    const deadline = Date.now() + 60_000;
    let answer: { status: string; error: string | null; k: number | null; labels: number[] | null; silhouette: (number | null)[] | null };
    for (;;) {
      answer = (await api<typeof answer>('GET', `/api/clusterings/${queued.body.id}`, { token: f.members.viewer.token })).body;
      if (answer.status === 'done' || answer.status === 'failed' || Date.now() > deadline) break;
      await new Promise((r) => setTimeout(r, 250));
    }
    expect(answer.status, answer.error ?? '').toBe('done');
    expect(answer.labels).toHaveLength(n);
    // The fixture's three well-separated Gaussian blobs (rows i % 3) are the clusters found.
    const clustered = (answer.labels ?? []).map((label, i) => [label, i % 3] as const).filter(([label]) => label >= 0);
    expect(new Set(clustered.map(([label]) => label)).size).toBe(3);
    for (const [label, blob] of clustered) expect(clustered.find(([other]) => other === label)?.[1]).toBe(blob);
    (answer.labels ?? []).forEach((label, i) => {
      if (label < 0) expect(answer.silhouette?.[i]).toBeNull();
    });
  }, 90_000);

  it('checks roles and settings: viewers read, analysts run, bad settings are named', async () => {
    const body = { method: 'pca', params: {}, seed: 99 };
    for (const role of ['expert', 'presenter', 'reviewer', 'viewer'] as const) {
      const answer = await api('POST', `/api/factor-sets/${factorSetId}/projections`, { token: f.members[role].token, body });
      expect(answer.status, role).toBe(403);
    }
    expect((await api('POST', `/api/factor-sets/${factorSetId}/projections`, { token: f.outsider.token, body })).status).toBe(404);
    expect((await api('GET', `/api/factor-sets/${factorSetId}/projections`, { token: f.outsider.token })).status).toBe(404);
    const tooMany = await api<{ error: { code: string; message: string } }>('POST', `/api/factor-sets/${factorSetId}/projections`, {
      token: f.members.analyst.token,
      body: { method: 'umap', params: { nNeighbors: 500 }, seed: 1 },
    });
    expect(tooMany.status).toBe(400);
    expect(tooMany.body.error.message).toContain('nNeighbors');
    const unknown = await api('POST', `/api/factor-sets/${factorSetId}/projections`, { token: f.members.analyst.token, body: { method: 'mds', seed: 1 } });
    expect(unknown.status).toBe(400);
    const list = await api<{ items: { id: string; status: string }[] }>('GET', `/api/factor-sets/${factorSetId}/projections`, { token: f.members.viewer.token });
    const one = list.body.items.find((p) => p.status === 'done');
    expect((await api('DELETE', `/api/projections/${one?.id}`, { token: f.members.expert.token })).status).toBe(403);
    expect((await api('GET', `/api/projections/${one?.id}`, { token: f.outsider.token })).status).toBe(404);
  });
});

describe('exact fidelity scores of a set large enough for worker threads', () => {
  it('stores the scores projectionFidelity (one thread) gives for the stored values and coordinates', async () => {
    const f = await workspaceWithEveryRole('Scored projection fixture');
    const n = 3000;
    const d = 6;
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(Array.from({ length: n }, (_, i) => `s${i}`), mixture(n, d, 21), d), filename: 'scored.csv' },
    });
    expect(created.status).toBe(201);
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${created.body.id}/projections`, { token: f.members.analyst.token, body: { method: 'pca', params: {}, seed: 4 } });
    const done = await until(queued.body.id, f.members.viewer.token, finished, 120_000);
    expect(done.status, done.error ?? '').toBe('done');
    const values = await binary(`/api/factor-sets/${created.body.id}/values`, f.members.viewer.token);
    const coords = await binary(`/api/projections/${done.id}/coords`, f.members.viewer.token);
    const expected = projectionFidelity(values, n, d, coords, mulberry32(4));
    expect(done.quality?.trustworthiness).toEqual({ '5': expected.trustworthiness[0], '15': expected.trustworthiness[1], '50': expected.trustworthiness[2] });
    expect(done.quality?.continuity).toEqual({ '5': expected.continuity[0], '15': expected.continuity[1], '50': expected.continuity[2] });
    expect([done.quality?.knnPreservation, done.quality?.shepardRho, done.quality?.stress]).toEqual([expected.knnPreservation, expected.shepardRho, expected.stress]);
    expect(Array.from(await binary(`/api/projections/${done.id}/fidelity`, f.members.viewer.token))).toEqual(Array.from(expected.perPoint));
  }, 180_000);
});

describe('projections of a factor set above 20,000 entities', () => {
  let f: RoleFixture;
  let factorSetId: string;
  const n = 20_500;
  const d = 4;
  const values = mixture(n, d, 11);

  beforeAll(async () => {
    f = await workspaceWithEveryRole('Large projection fixture');
    const ids = Array.from({ length: n }, (_, i) => `L${i}`);
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(ids, values, d), filename: 'large.csv' },
    });
    expect(created.status).toBe(201);
    factorSetId = created.body.id;
  }, 120_000);

  it('stores sampled T, C and kNN preservation and a per-point fidelity for every entity', async () => {
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, { token: f.members.analyst.token, body: { method: 'pca', params: {}, seed: 1 } });
    expect(queued.status).toBe(202);
    const done = await until(queued.body.id, f.members.viewer.token, finished, 120_000);
    expect(done.status, done.error ?? '').toBe('done');
    const quality = done.quality as (WireProjection['quality'] & { sampledQueries?: number }) | null;
    expect(quality?.sampledQueries).toBe(500);
    for (const k of ['5', '15', '50']) {
      expect(quality?.trustworthiness[k]).toBeGreaterThan(0.5);
      expect(quality?.trustworthiness[k]).toBeLessThanOrEqual(1);
      expect(quality?.continuity[k]).toBeGreaterThan(0.5);
      expect(quality?.continuity[k]).toBeLessThanOrEqual(1);
    }
    expect(quality?.knnPreservation).toBeGreaterThan(0);
    expect(done.versions?.neighbours).toBe('exact');
    const fidelity = await binary(`/api/projections/${done.id}/fidelity`, f.members.viewer.token);
    expect(fidelity.length).toBe(n);
    expect(fidelity.every((v) => v >= 0 && v <= 1)).toBe(true);
    // The per-point shares average to about the sampled preservation (500 queries: within 0.05, rule of thumb).
    const mean = fidelity.reduce((sum, v) => sum + v, 0) / n;
    expect(Math.abs(mean - (quality?.knnPreservation ?? 0))).toBeLessThan(0.05);
  }, 180_000);
});
