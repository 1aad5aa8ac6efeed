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
});
