import { beforeAll, describe, expect, it } from 'vitest';
import { api } from '../support/api';
import { testConfig } from '../support/config';
import { type RoleFixture, testDb, workspaceWithEveryRole } from '../support/fixtures';
import { float32Sequence, upload, wideCsv } from '../support/uploads';

async function storedCounts() {
  const db = testDb();
  const count = async (table: 'factor_sets' | 'factor_set_entities' | 'factor_set_blocks') =>
    Number((await db.selectFrom(table).select((eb) => eb.fn.countAll<number>().as('n')).executeTakeFirstOrThrow()).n);
  return { sets: await count('factor_sets'), entities: await count('factor_set_entities'), blocks: await count('factor_set_blocks') };
}

async function binaryValues(id: string, token: string): Promise<{ rows: number; dims: number; values: Float32Array }> {
  const response = await fetch(`${testConfig().baseUrl}/api/factor-sets/${id}/values`, { headers: { Authorization: `Bearer ${token}` } });
  expect(response.status).toBe(200);
  expect(response.headers.get('content-type')).toBe('application/octet-stream');
  const bytes = new Uint8Array(await response.arrayBuffer());
  return {
    rows: Number(response.headers.get('x-rows')),
    dims: Number(response.headers.get('x-dims')),
    values: new Float32Array(bytes.buffer, bytes.byteOffset, bytes.byteLength / 4),
  };
}

const sameBits = (a: Float32Array, b: Float32Array) => expect(Array.from(new Uint32Array(a.buffer, a.byteOffset, a.length))).toEqual(Array.from(new Uint32Array(b.buffer, b.byteOffset, b.length)));

describe('importing factor sets through the API', () => {
  let f: RoleFixture;
  let base: string;
  beforeAll(async () => {
    f = await workspaceWithEveryRole('Import fixture');
    base = `/api/workspaces/${f.workspaceId}/factor-sets`;
  });

  it('imports a wide CSV with metadata and serves the values back bit-identical', async () => {
    const n = 37;
    const k = 5;
    const ids = Array.from({ length: n }, (_, i) => `shop-${i + 1}`);
    const values = float32Sequence(n * k, 7);
    const kinds = ids.map((_, i) => ['campus town', 'holiday coast', 'commuter station'][i % 3] ?? '');
    const csv = wideCsv(ids, values, k, { header: 'kind', cells: kinds });
    const answer = await upload<{ id: string; rows: number; dims: number; draws: number; warnings: string[] }>(base, f.members.analyst.token, {
      file: { content: csv, filename: 'shops.csv' },
      fields: { name: 'Shops, spring fit' },
    });
    expect(answer.status, JSON.stringify(answer.body)).toBe(201);
    expect(answer.body).toMatchObject({ name: 'Shops, spring fit', rows: n, dims: k, draws: 0 });

    const back = await binaryValues(answer.body.id, f.members.viewer.token);
    expect([back.rows, back.dims]).toEqual([n, k]);
    sameBits(back.values, values);

    const detail = await api<{ checksumSha256: string; metadataColumns: unknown; format: string }>('GET', `/api/factor-sets/${answer.body.id}`, {
      token: f.members.reviewer.token,
    });
    expect(detail.body.format).toBe('delimited-wide');
    expect(detail.body.metadataColumns).toEqual([{ name: 'kind', type: 'category' }]);
    const { createHash } = await import('node:crypto');
    expect(detail.body.checksumSha256).toBe(createHash('sha256').update(csv).digest('hex'));

    const list = await api<{ items: { id: string }[] }>('GET', base, { token: f.members.presenter.token });
    expect(list.body.items.map((i) => i.id)).toContain(answer.body.id);

    const page = await api<{ items: { id: string; metadata: Record<string, string> }[]; total: number }>(
      'GET',
      `/api/factor-sets/${answer.body.id}/entities?page=2&pageSize=10&sort=id&dir=desc`,
      { token: f.members.viewer.token },
    );
    expect(page.body.total).toBe(n);
    expect(page.body.items).toHaveLength(10);
    const sortedIds = [...ids].sort().reverse();
    expect(page.body.items.map((e) => e.id)).toEqual(sortedIds.slice(10, 20));
    const searched = await api<{ items: { id: string }[]; total: number }>('GET', `/api/factor-sets/${answer.body.id}/entities?q=shop-3`, {
      token: f.members.viewer.token,
    });
    expect(searched.body.items.map((e) => e.id).sort()).toEqual(['shop-3', 'shop-30', 'shop-31', 'shop-32', 'shop-33', 'shop-34', 'shop-35', 'shop-36', 'shop-37']);

    const csvBack = await fetch(`${testConfig().baseUrl}/api/factor-sets/${answer.body.id}/values?format=csv`, {
      headers: { Authorization: `Bearer ${f.members.viewer.token}` },
    }).then((r) => r.text());
    const lines = csvBack.trim().split('\n');
    expect(lines[0]).toBe('id,dim_1,dim_2,dim_3,dim_4,dim_5');
    const reread = Float32Array.from(lines.slice(1).flatMap((l) => l.split(',').slice(1).map(Number)));
    sameBits(reread, values);
  });

  it('only owners and analysts import; others get 403, outsiders 404, and nothing is stored', async () => {
    const csv = wideCsv(['a', 'b', 'c'], float32Sequence(6), 2);
    const before = await storedCounts();
    for (const role of ['expert', 'presenter', 'reviewer', 'viewer'] as const) {
      const answer = await upload(base, f.members[role].token, { file: { content: csv, filename: 'x.csv' } });
      expect(answer.status, role).toBe(403);
    }
    expect((await upload(base, f.outsider.token, { file: { content: csv, filename: 'x.csv' } })).status).toBe(404);
    expect((await upload(base, undefined, { file: { content: csv, filename: 'x.csv' } })).status).toBe(401);
    expect(await storedCounts()).toEqual(before);
    const owner = await upload<{ id: string }>(base, f.members.owner.token, { file: { content: csv, filename: 'owner.csv' } });
    expect(owner.status).toBe(201);
    expect((await api('DELETE', `/api/factor-sets/${owner.body.id}`, { token: f.members.expert.token })).status).toBe(403);
    expect((await api('GET', `/api/factor-sets/${owner.body.id}`, { token: f.outsider.token })).status).toBe(404);
    expect((await api('DELETE', `/api/factor-sets/${owner.body.id}`, { token: f.members.analyst.token })).status).toBe(204);
    expect(await storedCounts()).toEqual(before);
  });

  it('a bad value in the last of 5,000 rows gets 422 naming line and column, and leaves no trace', async () => {
    const n = 5000;
    const ids = Array.from({ length: n }, (_, i) => `r${i}`);
    const lines = wideCsv(ids, float32Sequence(n * 3, 3), 3).trim().split('\n');
    lines[n] = `r${n - 1},0.5,NaN,0.25`;
    const before = await storedCounts();
    const answer = await upload<{ error: { code: string; message: string; file: string; line: number; column: unknown; places: unknown[]; count: number } }>(
      base,
      f.members.analyst.token,
      { file: { content: `${lines.join('\n')}\n`, filename: 'late-failure.csv' } },
    );
    expect(answer.status).toBe(422);
    expect(answer.body.error.file).toBe('late-failure.csv');
    expect(answer.body.error.line).toBe(n + 1);
    expect(answer.body.error.column === 'f2' || answer.body.error.column === 3).toBe(true);
    expect(answer.body.error.count).toBe(1);
    expect(await storedCounts()).toEqual(before);
  });

  it('refuses more dimensions than IMPORT_MAX_DIMS allows (512), with nothing stored', async () => {
    const k = 513;
    const csv = wideCsv(['a', 'b'], float32Sequence(2 * k), k);
    const before = await storedCounts();
    const answer = await upload<{ error: { code: string } }>(base, f.members.analyst.token, { file: { content: csv, filename: 'wide.csv' } });
    expect(answer.status).toBe(422);
    expect(answer.body.error.code).toBe('too_many_dims');
    expect(await storedCounts()).toEqual(before);
  });

  it('refuses bad fields and a missing file with 400', async () => {
    const csv = wideCsv(['a', 'b'], float32Sequence(4), 2);
    const badOptions = await upload<{ error: { code: string; message: string } }>(base, f.members.analyst.token, {
      file: { content: csv, filename: 'x.csv' },
      fields: { options: '{"idColumn": "id", "colour": "red"}' },
    });
    expect(badOptions.status).toBe(400);
    expect(badOptions.body.error.message).toContain('colour');
    const noFile = await upload<{ error: { code: string } }>(base, f.members.analyst.token, { fields: { name: 'x' } });
    expect(noFile.status).toBe(400);
    const notMultipart = await api('POST', base, { token: f.members.analyst.token, body: { name: 'x' } });
    expect(notMultipart.status).toBe(415);
  });

  it('previews without storing, then stores on confirmation, once', async () => {
    const csv = wideCsv(['p1', 'p2', 'p3', 'p4'], float32Sequence(8, 11), 2);
    const before = await storedCounts();
    const preview = await upload<{ importId: string; format: string; rows: number; dims: number; preview: { id: string }[] }>(
      `/api/workspaces/${f.workspaceId}/imports`,
      f.members.analyst.token,
      { file: { content: csv, filename: 'preview.csv' } },
    );
    expect(preview.status).toBe(200);
    expect(preview.body).toMatchObject({ format: 'delimited-wide', rows: 4, dims: 2 });
    expect(preview.body.preview.map((p) => p.id)).toEqual(['p1', 'p2', 'p3', 'p4']);
    expect(await storedCounts()).toEqual(before);

    const stranger = await api('POST', `/api/imports/${preview.body.importId}`, { token: f.members.owner.token, body: {} });
    expect(stranger.status).toBe(404);
    // A double click: two confirmations at once store one factor set.
    const [first, second] = await Promise.all(
      [0, 1].map(() => api<{ id: string; name: string }>('POST', `/api/imports/${preview.body.importId}`, { token: f.members.analyst.token, body: { name: 'Previewed' } })),
    );
    expect([first?.status, second?.status].sort()).toEqual([201, 404]);
    const confirmed = first?.status === 201 ? first : second;
    expect(confirmed?.body.name).toBe('Previewed');
    expect((await storedCounts()).sets).toBe(before.sets + 1);
    const again = await api('POST', `/api/imports/${preview.body.importId}`, { token: f.members.analyst.token, body: {} });
    expect(again.status).toBe(404);
  });

  it('imports row and column factors of one fit as joint partners, aligned with the same rotation per draw', async () => {
    const [n, m, k, draws] = [20, 8, 2, 30];
    const gamma = float32Sequence(n * k, 21);
    const delta = float32Sequence(m * k, 22);
    const header = ['chain', 'iteration', 'lp__'];
    for (let i = 1; i <= n; i += 1) for (let c = 1; c <= k; c += 1) header.push(`gamma.${i}.${c}`);
    for (let j = 1; j <= m; j += 1) for (let c = 1; c <= k; c += 1) header.push(`delta.${j}.${c}`);
    const lines = [header.join(',')];
    for (let d = 0; d < draws; d += 1) {
      // Each draw is the same fit under its own rotation (and, every other draw, a reflection).
      const angle = d * 0.7;
      const flip = d % 2 ? -1 : 1;
      const rotate = (x: number, y: number) => [Math.cos(angle) * x - Math.sin(angle) * y, flip * (Math.sin(angle) * x + Math.cos(angle) * y)];
      const row: string[] = ['1', String(d + 1), '-12.5'];
      for (let i = 0; i < n; i += 1) row.push(...rotate(gamma[i * k] ?? 0, gamma[i * k + 1] ?? 0).map(String));
      for (let j = 0; j < m; j += 1) row.push(...rotate(delta[j * k] ?? 0, delta[j * k + 1] ?? 0).map(String));
      lines.push(row.join(','));
    }
    const answer = await upload<{ id: string; rows: number; dims: number; draws: number; partner: { id: string; rows: number } }>(base, f.members.analyst.token, {
      file: { content: `${lines.join('\n')}\n`, filename: 'fit-draws.csv' },
      fields: { name: 'Shops × categories', options: JSON.stringify({ parameter: 'gamma', partnerParameter: 'delta' }) },
    });
    expect(answer.status, JSON.stringify(answer.body)).toBe(201);
    expect(answer.body).toMatchObject({ rows: n, dims: k, draws, partner: { rows: m } });
    const main = await api<{ jointPartnerId: string; report: { alignment: { joint: boolean } } }>('GET', `/api/factor-sets/${answer.body.id}`, { token: f.members.viewer.token });
    expect(main.body.jointPartnerId).toBe(answer.body.partner.id);
    expect(main.body.report.alignment.joint).toBe(true);
    const partner = await api<{ jointPartnerId: string }>('GET', `/api/factor-sets/${answer.body.partner.id}`, { token: f.members.viewer.token });
    expect(partner.body.jointPartnerId).toBe(answer.body.id);

    // Only the product γ_i·δ_j is identified: the aligned means must reproduce it.
    const g = (await binaryValues(answer.body.id, f.members.viewer.token)).values;
    const dl = (await binaryValues(answer.body.partner.id, f.members.viewer.token)).values;
    let worst = 0;
    for (let i = 0; i < n; i += 1) {
      for (let j = 0; j < m; j += 1) {
        const truth = (gamma[i * k] ?? 0) * (delta[j * k] ?? 0) + (gamma[i * k + 1] ?? 0) * (delta[j * k + 1] ?? 0);
        const got = (g[i * k] ?? 0) * (dl[j * k] ?? 0) + (g[i * k + 1] ?? 0) * (dl[j * k + 1] ?? 0);
        worst = Math.max(worst, Math.abs(got - truth));
      }
    }
    expect(worst).toBeLessThan(1e-4);

    // The neighbour panel's partner list: shop 1's categories by affinity γ_1·δ_j, highest first.
    const near = await api<{ partner: { items: { id: string; affinity: number }[] } }>(
      'GET',
      `/api/factor-sets/${answer.body.id}/neighbors?entity=1&k=3`,
      { token: f.members.viewer.token },
    );
    expect(near.status).toBe(200);
    const truthAffinity = Array.from({ length: m }, (_, j) => ({
      id: String(j + 1),
      affinity: (gamma[0] ?? 0) * (delta[j * k] ?? 0) + (gamma[1] ?? 0) * (delta[j * k + 1] ?? 0),
    })).sort((a, b) => b.affinity - a.affinity);
    expect(near.body.partner.items.map((i) => i.id)).toEqual(truthAffinity.slice(0, 3).map((t) => t.id));

    // Once a projection has cached the neighbour graph, the same query reads one row of it and
    // one row of the matrix for the partner's affinities: the same answer.
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${answer.body.id}/projections`, { token: f.members.analyst.token, body: { method: 'pca', params: {}, seed: 1 } });
    for (let tries = 0; ; tries += 1) {
      const p = await api<{ status: string }>('GET', `/api/projections/${queued.body.id}`, { token: f.members.viewer.token });
      if (p.body.status === 'done') break;
      if (tries > 240 || p.body.status === 'failed') throw new Error(`projection ${p.body.status}`);
      await new Promise((r) => setTimeout(r, 250));
    }
    const cached = await api<{ source: string; items: { id: string }[]; partner: { items: { id: string; affinity: number }[] } }>(
      'GET',
      `/api/factor-sets/${answer.body.id}/neighbors?entity=1&k=3`,
      { token: f.members.viewer.token },
    );
    expect(cached.body.source).toBe('exact graph');
    expect(cached.body.partner.items).toEqual(near.body.partner.items);
  });

  it('lists an entity’s nearest neighbours in the latent space, Euclidean or cosine', async () => {
    const csv = 'id,x,y\ne0,0,1\ne1,1,1\ne2,3,1\ne3,7,1\ne4,-10,-10\n';
    const made = await upload<{ id: string }>(base, f.members.analyst.token, { file: { content: csv, filename: 'line.csv' } });
    const euclid = await api<{ items: { id: string; distance: number }[] }>('GET', `/api/factor-sets/${made.body.id}/neighbors?entity=e1&k=2`, {
      token: f.members.viewer.token,
    });
    expect(euclid.status).toBe(200);
    expect(euclid.body.items.map((i) => [i.id, i.distance])).toEqual([
      ['e0', 1],
      ['e2', 2],
    ]);
    const cosine = await api<{ items: { id: string; similarity: number }[] }>('GET', `/api/factor-sets/${made.body.id}/neighbors?entity=e4&k=1&metric=cosine`, {
      token: f.members.viewer.token,
    });
    // e4 points along (−1, −1); of the others, e0 = (0, 1) is the least opposed: cos = −1/√2.
    expect(cosine.body.items[0]?.id).toBe('e0');
    expect(cosine.body.items[0]?.similarity).toBeCloseTo(-Math.SQRT1_2, 6);
    expect((await api('GET', `/api/factor-sets/${made.body.id}/neighbors?entity=nope`, { token: f.members.viewer.token })).status).toBe(404);
    expect((await api('GET', `/api/factor-sets/${made.body.id}/neighbors?entity=e1`, { token: f.outsider.token })).status).toBe(404);
  });

  it('takes a matrix written by R’s write.csv (unnamed, quoted row-name column)', async () => {
    const csv = '"","V1","V2"\r\n"Larkspur Ashby",0.5,1.25\r\n"Larkspur Dunmere",-2,3\r\n';
    const answer = await upload<{ id: string; rows: number; dims: number }>(base, f.members.analyst.token, { file: { content: csv, filename: 'from-r.csv' } });
    expect(answer.status, JSON.stringify(answer.body)).toBe(201);
    expect(answer.body).toMatchObject({ rows: 2, dims: 2 });
    const entities = await api<{ items: { id: string }[] }>('GET', `/api/factor-sets/${answer.body.id}/entities`, { token: f.members.viewer.token });
    expect(entities.body.items.map((e) => e.id)).toEqual(['Larkspur Ashby', 'Larkspur Dunmere']);
  });

  it('deleting a workspace removes its factor sets, entities and blocks', async () => {
    const before = await storedCounts();
    const made = await api<{ id: string }>('POST', '/api/workspaces', { token: f.members.analyst.token, body: { name: 'Short-lived' } });
    const csv = wideCsv(['x', 'y', 'z'], float32Sequence(9, 2), 3);
    expect((await upload(`/api/workspaces/${made.body.id}/factor-sets`, f.members.analyst.token, { file: { content: csv, filename: 'x.csv' } })).status).toBe(201);
    expect((await storedCounts()).entities).toBe(before.entities + 3);
    expect((await api('DELETE', `/api/workspaces/${made.body.id}`, { token: f.members.analyst.token })).status).toBe(204);
    expect(await storedCounts()).toEqual(before);
  });

  it('aligns one factor set onto a rotated copy of itself with disparity ≈ 0', async () => {
    const n = 30;
    const k = 3;
    const ids = Array.from({ length: n }, (_, i) => `e${i}`);
    const values = float32Sequence(n * k, 5);
    // A rotation by 90° in the first two dimensions and a reflection of the third.
    const rotated = new Float32Array(n * k);
    for (let i = 0; i < n; i += 1) {
      rotated[i * k] = -(values[i * k + 1] ?? 0);
      rotated[i * k + 1] = values[i * k] ?? 0;
      rotated[i * k + 2] = -(values[i * k + 2] ?? 0);
    }
    const a = await upload<{ id: string }>(base, f.members.analyst.token, { file: { content: wideCsv(ids, values, k), filename: 'fit-a.csv' } });
    const b = await upload<{ id: string }>(base, f.members.analyst.token, {
      file: { content: wideCsv([...ids].reverse(), Float32Array.from(ids.flatMap((_, i) => Array.from(rotated.subarray((n - 1 - i) * k, (n - i) * k)))), k), filename: 'fit-b.csv' },
    });
    const aligned = await api<{ matched: number; disparity: number; rotation: number[][] }>('POST', `/api/factor-sets/${b.body.id}/align`, {
      token: f.members.analyst.token,
      body: { to: a.body.id },
    });
    expect(aligned.status, JSON.stringify(aligned.body)).toBe(200);
    expect(aligned.body.matched).toBe(n);
    expect(aligned.body.disparity).toBeLessThan(1e-10);
    expect(aligned.body.rotation).toHaveLength(k);
    const viewerTry = await api('POST', `/api/factor-sets/${b.body.id}/align`, { token: f.members.viewer.token, body: { to: a.body.id } });
    expect(viewerTry.status).toBe(403);
  });
});
