import { beforeAll, describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { api } from '../support/api';
import { type RoleFixture, testDb, workspaceWithEveryRole } from '../support/fixtures';
import { upload, wideCsv } from '../support/uploads';

interface WireProjection {
  id: string;
  status: string;
  error: string | null;
  versions: Record<string, string> | null;
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

  async function project(body: object): Promise<WireProjection> {
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, { token: f.members.analyst.token, body });
    expect([200, 202]).toContain(queued.status);
    const deadline = Date.now() + 90_000;
    for (;;) {
      const p = (await api<WireProjection>('GET', `/api/projections/${queued.body.id}`, { token: f.members.analyst.token })).body;
      if (p.status === 'done' || p.status === 'failed') return p;
      if (Date.now() > deadline) throw new Error(`projection still ${p.status}`);
      await new Promise((r) => setTimeout(r, 250));
    }
  }

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
