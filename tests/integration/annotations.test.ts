import { beforeAll, describe, expect, it } from 'vitest';
import { ROLES } from '@/lib/permissions';
import { api } from '../support/api';
import { type RoleFixture, workspaceWithEveryRole } from '../support/fixtures';
import { float32Sequence, upload, wideCsv } from '../support/uploads';

interface WireAnnotation {
  id: string;
  name: string;
  color: string;
  description: string;
  version: number;
  memberCount: number;
  entities?: string[];
  indices?: number[];
  updatedBy: { id: string; name: string } | null;
}

interface WireChange {
  version: number;
  action: string;
  changes: { added?: number; removed?: number; fields?: Record<string, { from: string | null; to: string | null }> };
  actor: { id: string } | null;
}

describe('annotations: named sets of entities, versioned, with history', () => {
  let f: RoleFixture;
  let factorSetId: string;
  const n = 40;
  const ids = Array.from({ length: n }, (_, i) => `shop-${String(i).padStart(2, '0')}`);

  beforeAll(async () => {
    f = await workspaceWithEveryRole('Annotation fixture');
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(ids, float32Sequence(n * 3, 5), 3), filename: 'shops.csv' },
    });
    expect(created.status).toBe(201);
    factorSetId = created.body.id;
  });

  it('creates from entity ids, answers members by id and by index, and refuses unknown entities by name', async () => {
    const created = await api<WireAnnotation>('POST', `/api/factor-sets/${factorSetId}/annotations`, {
      token: f.members.expert.token,
      body: { name: 'Campus towns', color: '#1E4D5C', description: 'Term-time peaks', entities: ['shop-03', 'shop-01', 'shop-03', 'shop-07'] },
    });
    expect(created.status).toBe(201);
    expect(created.body).toMatchObject({ name: 'Campus towns', color: '#1e4d5c', version: 1, memberCount: 3, entities: ['shop-01', 'shop-03', 'shop-07'] });

    const asIndices = await api<{ items: WireAnnotation[] }>('GET', `/api/factor-sets/${factorSetId}/annotations?members=indices`, { token: f.members.viewer.token });
    expect(asIndices.status).toBe(200);
    expect(asIndices.body.items.find((a) => a.id === created.body.id)?.indices).toEqual([1, 3, 7]);

    const unknown = await api<{ error: { code: string; message: string } }>('POST', `/api/factor-sets/${factorSetId}/annotations`, {
      token: f.members.expert.token,
      body: { name: 'Ghosts', color: '#7a5310', entities: ['shop-01', 'nope-1', 'nope-2'] },
    });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.code).toBe('unknown_entities');
    expect(unknown.body.error.message).toContain('"nope-1"');
    const duplicate = await api('POST', `/api/factor-sets/${factorSetId}/annotations`, {
      token: f.members.expert.token,
      body: { name: 'campus TOWNS', color: '#7a5310', indices: [2] },
    });
    expect(duplicate.status).toBe(409);
    const bad = await api('POST', `/api/factor-sets/${factorSetId}/annotations`, { token: f.members.expert.token, body: { name: 'x', color: 'teal', indices: [1] } });
    expect(bad.status).toBe(400);
    const both = await api('POST', `/api/factor-sets/${factorSetId}/annotations`, { token: f.members.expert.token, body: { name: 'y', color: '#123456', indices: [1], entities: ['shop-01'] } });
    expect(both.status).toBe(400);
    const outOfRange = await api('POST', `/api/factor-sets/${factorSetId}/annotations`, { token: f.members.expert.token, body: { name: 'z', color: '#123456', indices: [n] } });
    expect(outOfRange.status).toBe(400);
  });

  it('refuses a stale edit with 409 and keeps the newer one; records every change', async () => {
    const created = await api<WireAnnotation>('POST', `/api/factor-sets/${factorSetId}/annotations`, {
      token: f.members.analyst.token,
      body: { name: 'Holiday coast', color: '#7a5310', indices: [10, 11, 12] },
    });
    expect(created.status).toBe(201);
    const id = created.body.id;

    // Two editors open version 1; the expert saves first.
    const first = await api<WireAnnotation>('PATCH', `/api/annotations/${id}`, {
      token: f.members.expert.token,
      body: { version: 1, name: 'Holiday coast towns', add: { entities: ['shop-13'] }, remove: { indices: [10] } },
    });
    expect(first.status).toBe(200);
    expect(first.body).toMatchObject({ version: 2, name: 'Holiday coast towns', entities: ['shop-11', 'shop-12', 'shop-13'] });
    const stale = await api<{ error: { code: string; message: string; details: { currentVersion: number } } }>('PATCH', `/api/annotations/${id}`, {
      token: f.members.owner.token,
      body: { version: 1, description: 'overwrites?' },
    });
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe('stale_version');
    expect(stale.body.error.details.currentVersion).toBe(2);
    const after = await api<WireAnnotation>('GET', `/api/annotations/${id}`, { token: f.members.viewer.token });
    expect(after.body).toMatchObject({ version: 2, description: '', name: 'Holiday coast towns' });

    // Concurrent edits from the same version: exactly one wins.
    const race = await Promise.all(
      ['#111111', '#222222', '#333333'].map((color) => api('PATCH', `/api/annotations/${id}`, { token: f.members.expert.token, body: { version: 2, color } })),
    );
    expect(race.map((r) => r.status).sort()).toEqual([200, 409, 409]);

    const history = await api<{ items: WireChange[] }>('GET', `/api/annotations/${id}/history`, { token: f.members.viewer.token });
    expect(history.status).toBe(200);
    expect(history.body.items.map((c) => [c.version, c.action])).toEqual([
      [3, 'updated'],
      [2, 'updated'],
      [1, 'created'],
    ]);
    expect(history.body.items[1]?.changes).toMatchObject({ added: 1, removed: 1, fields: { name: { from: 'Holiday coast', to: 'Holiday coast towns' } } });
    expect(history.body.items[1]?.actor?.id).toBe(f.members.expert.id);

    const staleDelete = await api('DELETE', `/api/annotations/${id}?version=2`, { token: f.members.expert.token });
    expect(staleDelete.status).toBe(409);
    const removed = await api('DELETE', `/api/annotations/${id}?version=3`, { token: f.members.expert.token });
    expect(removed.status).toBe(204);
    expect((await api('GET', `/api/annotations/${id}`, { token: f.members.owner.token })).status).toBe(404);
    const kept = await api<{ items: WireChange[] }>('GET', `/api/annotations/${id}/history`, { token: f.members.owner.token });
    expect(kept.body.items[0]).toMatchObject({ version: 4, action: 'deleted' });
  });

  it('lets owner, analyst and expert edit; presenter, reviewer and viewer read; outsiders see nothing', async () => {
    const editors = new Set(['owner', 'analyst', 'expert']);
    for (const role of ROLES) {
      const answer = await api('POST', `/api/factor-sets/${factorSetId}/annotations`, {
        token: f.members[role].token,
        body: { name: `By ${role}`, color: '#445566', indices: [20] },
      });
      expect(answer.status, role).toBe(editors.has(role) ? 201 : 403);
      const list = await api('GET', `/api/factor-sets/${factorSetId}/annotations`, { token: f.members[role].token });
      expect(list.status, role).toBe(200);
    }
    const list = await api<{ items: WireAnnotation[] }>('GET', `/api/factor-sets/${factorSetId}/annotations`, { token: f.members.owner.token });
    const target = list.body.items.find((a) => a.name === 'By expert');
    expect(target).toBeDefined();
    const refused = await api('PATCH', `/api/annotations/${target?.id}`, { token: f.members.viewer.token, body: { version: 1, name: 'viewer edit' } });
    expect(refused.status).toBe(403);
    expect((await api('DELETE', `/api/annotations/${target?.id}`, { token: f.members.reviewer.token })).status).toBe(403);
    expect((await api('GET', `/api/factor-sets/${factorSetId}/annotations`, { token: f.outsider.token })).status).toBe(404);
    expect((await api('GET', `/api/annotations/${target?.id}`, { token: f.outsider.token })).status).toBe(404);
    expect((await api('GET', `/api/annotations/${target?.id}/history`, { token: f.outsider.token })).status).toBe(404);
  });

  it('answers 304 to an unchanged list and a new ETag after a change (what an open map polls)', async () => {
    const first = await api('GET', `/api/factor-sets/${factorSetId}/annotations?members=indices`, { token: f.members.viewer.token });
    const etag = first.headers.get('etag');
    expect(etag).toBeTruthy();
    const again = await api('GET', `/api/factor-sets/${factorSetId}/annotations?members=indices`, { token: f.members.viewer.token, headers: { 'If-None-Match': etag ?? '' } });
    expect(again.status).toBe(304);
    await api('POST', `/api/factor-sets/${factorSetId}/annotations`, { token: f.members.expert.token, body: { name: 'Commuter stations', color: '#335577', indices: [30, 31] } });
    const changed = await api('GET', `/api/factor-sets/${factorSetId}/annotations?members=indices`, { token: f.members.viewer.token, headers: { 'If-None-Match': etag ?? '' } });
    expect(changed.status).toBe(200);
    expect(changed.headers.get('etag')).not.toBe(etag);
  });
});

describe('saved views', () => {
  let f: RoleFixture;
  let projectionId: string;

  beforeAll(async () => {
    f = await workspaceWithEveryRole('View fixture');
    const ids = Array.from({ length: 30 }, (_, i) => `e${i}`);
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: wideCsv(ids, float32Sequence(90, 9), 3), filename: 'e.csv' },
    });
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${created.body.id}/projections`, { token: f.members.analyst.token, body: { method: 'pca', params: {}, seed: 3 } });
    projectionId = queued.body.id;
  });

  const state = () => ({
    projectionId,
    camera: { target: [0.5, -1.25], zoom: 2 },
    colorBy: { kind: 'none' },
    sizeBy: { kind: 'fixed' },
    filters: [],
    selection: ['e1', 'e2'],
  });

  it('saves, lists, renames with a version check and deletes views; presenters and owners save, others read', async () => {
    const saved = await api<{ id: string; version: number; state: { selection: string[] } }>('POST', `/api/workspaces/${f.workspaceId}/views`, {
      token: f.members.presenter.token,
      body: { name: 'Board slide 3', state: state() },
    });
    expect(saved.status).toBe(201);
    expect(saved.body.state.selection).toEqual(['e1', 'e2']);
    for (const role of ['analyst', 'expert', 'reviewer', 'viewer'] as const) {
      const refused = await api('POST', `/api/workspaces/${f.workspaceId}/views`, { token: f.members[role].token, body: { name: 'x', state: state() } });
      expect(refused.status, role).toBe(403);
      const list = await api<{ items: { id: string }[] }>('GET', `/api/workspaces/${f.workspaceId}/views`, { token: f.members[role].token });
      expect(list.body.items.map((v) => v.id)).toContain(saved.body.id);
    }
    const renamed = await api<{ name: string; version: number }>('PATCH', `/api/views/${saved.body.id}`, { token: f.members.owner.token, body: { version: 1, name: 'Board slide 4' } });
    expect(renamed.body).toMatchObject({ name: 'Board slide 4', version: 2 });
    expect((await api('PATCH', `/api/views/${saved.body.id}`, { token: f.members.presenter.token, body: { version: 1, name: 'late' } })).status).toBe(409);
    const badState = await api('POST', `/api/workspaces/${f.workspaceId}/views`, { token: f.members.presenter.token, body: { name: 'bad', state: { ...state(), camera: { target: [0], zoom: 2 } } } });
    expect(badState.status).toBe(400);
    const foreign = await api('POST', `/api/workspaces/${f.workspaceId}/views`, {
      token: f.members.presenter.token,
      body: { name: 'foreign', state: { ...state(), projectionId: '00000000-0000-4000-8000-000000000000' } },
    });
    expect(foreign.status).toBe(400);
    expect((await api('GET', `/api/views/${saved.body.id}`, { token: f.outsider.token })).status).toBe(404);
    expect((await api('DELETE', `/api/views/${saved.body.id}`, { token: f.members.presenter.token })).status).toBe(204);
  });
});
