import { beforeAll, describe, expect, it } from 'vitest';
import { mulberry32, normalGenerator } from '@/lib/align/random';
import { api } from '../support/api';
import { testConfig } from '../support/config';
import { type RoleFixture, workspaceWithEveryRole } from '../support/fixtures';
import { upload } from '../support/uploads';

interface Cloud {
  entity: { index: number; id: string };
  placement: string;
  draws: number;
  points: number[];
  ellipse: { cx: number; cy: number; rx: number; ry: number };
}

/** An entity's posterior draws on a map: exact through PCA's loadings, by UMAP's transform otherwise. */
describe('draw clouds on a map', () => {
  let f: RoleFixture;
  let factorSetId: string;
  const [n, k, draws] = [90, 3, 40];

  beforeAll(async () => {
    f = await workspaceWithEveryRole('Draw cloud fixture');
    const normal = normalGenerator(mulberry32(8));
    const means = Array.from({ length: n * k }, (_, t) => normal() + (Math.floor(t / k) % 3 === t % k ? 5 : 0));
    const header = ['chain', 'iteration'];
    for (let i = 1; i <= n; i += 1) for (let c = 1; c <= k; c += 1) header.push(`gamma.${i}.${c}`);
    const lines = [header.join(',')];
    for (let d = 0; d < draws; d += 1) lines.push(['1', String(d + 1), ...means.map((m) => String(m + 0.3 * normal()))].join(','));
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: `${lines.join('\n')}\n`, filename: 'draws.csv' },
      fields: { name: 'With draws', options: JSON.stringify({ parameter: 'gamma' }) },
    });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    factorSetId = created.body.id;
  });

  async function projection(method: string, params: object): Promise<{ id: string; coords: Float32Array }> {
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${factorSetId}/projections`, { token: f.members.analyst.token, body: { method, params, seed: 4 } });
    for (let tries = 0; ; tries += 1) {
      const p = await api<{ status: string; error: string | null }>('GET', `/api/projections/${queued.body.id}`, { token: f.members.analyst.token });
      if (p.body.status === 'done') break;
      if (p.body.status === 'failed' || tries > 240) throw new Error(`projection ${p.body.status}: ${p.body.error}`);
      await new Promise((r) => setTimeout(r, 250));
    }
    const response = await fetch(`${testConfig().baseUrl}/api/projections/${queued.body.id}/coords`, { headers: { Authorization: `Bearer ${f.members.viewer.token}` } });
    return { id: queued.body.id, coords: new Float32Array(await response.arrayBuffer()) };
  }

  const centre = (cloud: Cloud) => {
    let x = 0;
    let y = 0;
    for (let r = 0; r < cloud.draws; r += 1) {
      x += cloud.points[2 * r] ?? 0;
      y += cloud.points[2 * r + 1] ?? 0;
    }
    return [x / cloud.draws, y / cloud.draws];
  };

  it('PCA: the draws through the loadings average to the entity’s own position', async () => {
    const pca = await projection('pca', {});
    const ids = (await api<{ ids: string[] }>('GET', `/api/factor-sets/${factorSetId}/entities/columns`, { token: f.members.viewer.token })).body.ids;
    const entity = ids[5] ?? '';
    const answer = await api<Cloud>('GET', `/api/projections/${pca.id}/draws?entity=${encodeURIComponent(entity)}`, { token: f.members.viewer.token });
    expect(answer.status, JSON.stringify(answer.body)).toBe(200);
    expect(answer.body).toMatchObject({ placement: 'linear', draws, entity: { index: 5 } });
    const [cx, cy] = centre(answer.body);
    // Linear: the mean of projected draws is the projection of their mean, the aligned mean.
    expect(Math.abs((cx ?? 0) - (pca.coords[10] ?? 0))).toBeLessThan(1e-3);
    expect(Math.abs((cy ?? 0) - (pca.coords[11] ?? 0))).toBeLessThan(1e-3);
    expect(answer.body.ellipse.rx).toBeGreaterThan(0);
    expect((await api('GET', `/api/projections/${pca.id}/draws?entity=nope`, { token: f.members.viewer.token })).status).toBe(404);
    expect((await api('GET', `/api/projections/${pca.id}/draws?entity=${encodeURIComponent(entity)}`, { token: f.outsider.token })).status).toBe(404);
  }, 90_000);

  it('UMAP: the draws are placed by the transform, near the entity on the map', async () => {
    const umap = await projection('umap', { nNeighbors: 10, nEpochs: 200 });
    const ids = (await api<{ ids: string[] }>('GET', `/api/factor-sets/${factorSetId}/entities/columns`, { token: f.members.viewer.token })).body.ids;
    const answer = await api<Cloud>('GET', `/api/projections/${umap.id}/draws?entity=${encodeURIComponent(ids[7] ?? '')}`, { token: f.members.viewer.token });
    expect(answer.status, JSON.stringify(answer.body)).toBe(200);
    expect(answer.body.placement).toBe('transform');
    expect(answer.body.points.every(Number.isFinite)).toBe(true);
    let [minX, maxX, minY, maxY] = [Infinity, -Infinity, Infinity, -Infinity];
    for (let i = 0; i < n; i += 1) {
      minX = Math.min(minX, umap.coords[2 * i] ?? 0);
      maxX = Math.max(maxX, umap.coords[2 * i] ?? 0);
      minY = Math.min(minY, umap.coords[2 * i + 1] ?? 0);
      maxY = Math.max(maxY, umap.coords[2 * i + 1] ?? 0);
    }
    const [cx, cy] = centre(answer.body);
    const diameter = Math.hypot(maxX - minX, maxY - minY);
    // Rule of thumb: a draw cloud of small posterior noise stays within a fifth of the map of its entity.
    expect(Math.hypot((cx ?? 0) - (umap.coords[14] ?? 0), (cy ?? 0) - (umap.coords[15] ?? 0))).toBeLessThan(diameter / 5);
  }, 90_000);
});
