import { beforeAll, describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { readMatrix, readMatrixRow } from '@/lib/factor-sets/blocks';
import { APPROX_GRAPH_VERSION, KNN_CACHE_SEED } from '@/lib/projections/knn-cache';
import { api } from '../support/api';
import { type RoleFixture, testDb, workspaceWithEveryRole } from '../support/fixtures';
import { upload, wideCsv } from '../support/uploads';

interface WireProjection {
  id: string;
  status: string;
  error: string | null;
  versions: Record<string, string> | null;
}

/** Requests a projection (new or existing) and waits until it is done or failed. */
async function projectAndWait(factorSetId: string, token: string, body: object, timeoutMs: number): Promise<WireProjection> {
  const queued = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, { token, body });
  expect([200, 202]).toContain(queued.status);
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const p = (await api<WireProjection>('GET', `/api/projections/${queued.body.id}`, { token })).body;
    if (p.status === 'done' || p.status === 'failed') return p;
    if (Date.now() > deadline) throw new Error(`projection still ${p.status}`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

/** One neighbour graph per factor set and metric, computed by the first job and reused by the next. */
describe('the cached neighbour graph', () => {
  let f: RoleFixture;
  let factorSetId: string;

  beforeAll(async () => {
    f = await workspaceWithEveryRole('kNN cache fixture');
    const n = 300;
    const d = 4;
    const normal = normalGenerator(mulberry32(5));
    const values = new Float32Array(n * d);
    for (let i = 0; i < n * d; i += 1) values[i] = normal() + ((i / d) % 3) * 4;
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(Array.from({ length: n }, (_, i) => `q${i}`), values, d), filename: 'q.csv' },
    });
    factorSetId = created.body.id;
  });

  const project = (body: object) => projectAndWait(factorSetId, f.members.analyst.token, body, 90_000);

  const graphs = () => testDb().selectFrom('knn_graphs').select(['metric', 'k', 'exact', 'created_at']).where('factor_set_id', '=', factorSetId).execute();

  it('is computed once per metric, exact at this size, and shared by later projections', async () => {
    const first = await project({ method: 'umap', params: { nNeighbors: 10, nEpochs: 50 }, seed: 1 });
    expect(first.status, first.error ?? '').toBe('done');
    expect(first.versions?.neighbours).toBe('exact');
    const [row] = await graphs();
    expect(row).toMatchObject({ metric: 'euclidean', exact: true });
    const second = await project({ method: 'umap', params: { nNeighbors: 10, nEpochs: 50 }, seed: 2 });
    const third = await project({ method: 'pca', params: {}, seed: 1 });
    expect([second.status, third.status]).toEqual(['done', 'done']);
    const after = await graphs();
    expect(after).toHaveLength(1);
    expect(after[0]?.created_at.getTime()).toBe(row?.created_at.getTime());

    const cosine = await project({ method: 'umap', params: { nNeighbors: 10, nEpochs: 50, metric: 'cosine' }, seed: 1 });
    expect(cosine.status, cosine.error ?? '').toBe('done');
    expect((await graphs()).map((g) => g.metric).sort()).toEqual(['cosine', 'euclidean']);
  }, 180_000);

  it('answers the map’s neighbour queries from the cached graph, with the same neighbours as the exact search', async () => {
    type Answer = { source: string; items: { id: string; distance: number }[] };
    const ask = () => api<Answer>('GET', `/api/factor-sets/${factorSetId}/neighbors?entity=q7&k=12`, { token: f.members.viewer.token });
    const fromGraph = await ask();
    expect(fromGraph.status).toBe(200);
    expect(fromGraph.body.source).toBe('exact graph');
    // Without the graph the same query searches exactly.
    const saved = await testDb().selectFrom('knn_graphs').selectAll().where('factor_set_id', '=', factorSetId).where('metric', '=', 'euclidean').executeTakeFirstOrThrow();
    await testDb().deleteFrom('knn_graphs').where('factor_set_id', '=', factorSetId).where('metric', '=', 'euclidean').execute();
    const searched = await ask();
    await testDb().insertInto('knn_graphs').values(saved).execute();
    expect(searched.body.source).toBe('exact search');
    expect(fromGraph.body.items.map((item) => item.id)).toEqual(searched.body.items.map((item) => item.id));
    fromGraph.body.items.forEach((item, s) => expect(item.distance).toBeCloseTo(searched.body.items[s]?.distance ?? Number.NaN, 5));
    // More neighbours than the graph holds (50 at this size): an exact search.
    const many = await api<Answer>('GET', `/api/factor-sets/${factorSetId}/neighbors?entity=q7&k=80`, { token: f.members.viewer.token });
    expect(many.body.source).toBe('exact search');
    expect(many.body.items).toHaveLength(80);
  }, 60_000);
});

describe('the cached approximate neighbour graph of a large set', () => {
  it('is NN-descent of the current version, answers neighbour queries, and is recomputed when cached by an older version', async () => {
    const f = await workspaceWithEveryRole('Approximate graph fixture');
    // 30,000 × 16: n²·d = 1.44·10¹⁰, past the exact search's limit (20,000² · 32).
    const n = 30_000;
    const d = 16;
    const normal = normalGenerator(mulberry32(9));
    const values = new Float32Array(n * d);
    for (let i = 0; i < n * d; i += 1) values[i] = Math.round((normal() + (Math.floor(i / d) % 10) * 3) * 64) / 64;
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(Array.from({ length: n }, (_, i) => `a${i}`), values, d), filename: 'approx.csv' },
    });
    expect(created.status).toBe(201);
    const id = created.body.id;
    const current = `NN-descent ${APPROX_GRAPH_VERSION} (seed ${KNN_CACHE_SEED})`;
    const run = (seed: number) => projectAndWait(id, f.members.analyst.token, { method: 'pca', params: {}, seed }, 120_000);
    const graph = () => testDb().selectFrom('knn_graphs').select(['exact', 'k', 'method', 'created_at']).where('factor_set_id', '=', id).where('metric', '=', 'euclidean').executeTakeFirstOrThrow();

    const first = await run(1);
    expect(first.status, first.error ?? '').toBe('done');
    expect(first.versions?.neighbours).toBe(current);
    const stored = await graph();
    expect(stored).toMatchObject({ exact: false, k: 15, method: current });

    type Answer = { source: string; items: { id: string; distance: number }[] };
    const ask = (k: number) => api<Answer>('GET', `/api/factor-sets/${id}/neighbors?entity=a123&k=${k}`, { token: f.members.viewer.token });
    const approximate = await ask(10);
    expect(approximate.body.source).toBe('approximate graph');
    expect(approximate.body.items).toHaveLength(10);
    // No approximate neighbour list can beat the exact one place by place (k = 16 is past the graph: an exact search).
    const exact = await ask(16);
    expect(exact.body.source).toBe('exact search');
    approximate.body.items.forEach((item, s) => expect(item.distance).toBeGreaterThanOrEqual((exact.body.items[s]?.distance ?? Infinity) - 1e-6));

    // A graph cached by an older version of the search is not used, and the next job replaces it.
    await testDb().updateTable('knn_graphs').set({ method: `NN-descent ${APPROX_GRAPH_VERSION - 1} (seed ${KNN_CACHE_SEED})` }).where('factor_set_id', '=', id).execute();
    expect((await ask(10)).body.source).toBe('exact search');
    const second = await run(2);
    expect(second.status, second.error ?? '').toBe('done');
    const replaced = await graph();
    expect(replaced.method).toBe(current);
    expect(replaced.created_at.getTime()).toBeGreaterThan(stored.created_at.getTime());
    expect((await ask(10)).body.source).toBe('approximate graph');
  }, 240_000);
});

describe('readMatrixRow', () => {
  it('reads any row of a matrix stored in several blocks, equal to the whole read', async () => {
    const f = await workspaceWithEveryRole('Row read fixture');
    // 66,000 × 16 float32 rows: 65,536 fit in one 4 MiB block, so the rest start a second.
    const n = 66_000;
    const d = 16;
    const random = mulberry32(3);
    const values = Float32Array.from({ length: n * d }, () => Math.round(random() * 1000) / 8);
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(Array.from({ length: n }, (_, i) => `r${i}`), values, d), filename: 'rows.csv' },
    });
    expect(created.status).toBe(201);
    const blocks = await testDb().selectFrom('factor_set_blocks').select('block').where('factor_set_id', '=', created.body.id).where('kind', '=', 'values').execute();
    expect(blocks.length).toBeGreaterThan(1);
    const whole = await readMatrix(testDb(), created.body.id, 'values', n, d);
    for (const row of [0, 1, 65_535, 65_536, n - 1]) {
      expect(Array.from(await readMatrixRow(testDb(), created.body.id, 'values', row, d))).toEqual(Array.from(whole.subarray(row * d, (row + 1) * d)));
    }
    await expect(readMatrixRow(testDb(), created.body.id, 'values', n, d)).rejects.toThrow(/not stored/);
  }, 120_000);
});
