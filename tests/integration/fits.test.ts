import { beforeAll, describe, expect, it } from 'vitest';
import { simulate } from '@/lib/fit/simulate';
import { api } from '../support/api';
import { type RoleFixture, testDb, workspaceWithEveryRole } from '../support/fixtures';
import { upload } from '../support/uploads';

interface WireMetrics {
  rmse?: number | null;
  logLoss?: number | null;
  auc?: number | null;
  deviance?: number | null;
}
interface WireFit {
  id: string;
  status: string;
  progress: number;
  phase: string | null;
  error: string | null;
  settings: Record<string, unknown>;
  observations: number;
  rowEntities: number;
  columnEntities: number;
  metrics: Record<'fm' | 'mainEffects' | 'intercept', { inSample: WireMetrics; heldOut: WireMetrics | null }> | null;
  convergence: { iterations: number; converged: boolean; history: (number | null)[] } | null;
  summary: { ppc: { histogram: { observed: number[] } }; mainEffects: { source: string; rows: unknown[] }; ardScales: (number | null)[] | null } | null;
  factorSets: [string | null, string | null];
  rowFactorSetId: string | null;
  columnFactorSetId: string | null;
}
interface ErrorBody {
  error: { code: string; message: string; file?: string; line?: number | null; column?: number | string | null };
}

const finished = (f: WireFit) => f.status === 'done' || f.status === 'failed' || f.status === 'cancelled';

async function until(id: string, token: string, done: (f: WireFit) => boolean, timeoutMs = 45_000): Promise<WireFit> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const answer = await api<WireFit>('GET', `/api/fits/${id}`, { token });
    expect(answer.status).toBe(200);
    if (done(answer.body)) return answer.body;
    if (Date.now() > deadline) throw new Error(`fit ${id} still ${answer.body.status} (${answer.body.phase})`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

/**
 * A seeded Gaussian design, 60 × 30 entities, K = 3, written as a long table; pairs with
 * (i + j) % 13 === 0 are left out, so predictions for them are for pairs never observed together.
 */
function gaussianTable(): { csv: string; unobserved: [string, string] } {
  const sim = simulate({ rows: 60, columns: 30, rank: 3, likelihood: 'gaussian', seed: 11, noiseSd: 0.5 });
  const d = sim.design;
  const lines = ['shop,category,sales'];
  let unobserved: [string, string] | null = null;
  for (let t = 0; t < d.n; t++) {
    const i = d.row[t] as number;
    const j = d.column[t] as number;
    const pair: [string, string] = [`shop-${i}`, `cat-${j}`];
    if ((i + j) % 13 === 0) {
      unobserved ??= pair;
      continue;
    }
    lines.push(`${pair[0]},${pair[1]},${(d.y[t] as number).toFixed(6)}`);
  }
  if (!unobserved) throw new Error('no pair left out');
  return { csv: `${lines.join('\n')}\n`, unobserved };
}

describe('factorization-machine fits', () => {
  let f: RoleFixture;
  const table = gaussianTable();
  const settings = { rowColumn: 'shop', columnColumn: 'category', outcome: 'sales', likelihood: 'gaussian', rank: 3, folds: 3, seed: 7 };

  const counts = async () => {
    const db = testDb();
    const fits = await db.selectFrom('fits').select((eb) => eb.fn.countAll<string>().as('n')).where('workspace_id', '=', f.workspaceId).executeTakeFirstOrThrow();
    const sets = await db.selectFrom('factor_sets').select((eb) => eb.fn.countAll<string>().as('n')).where('workspace_id', '=', f.workspaceId).executeTakeFirstOrThrow();
    return { fits: Number(fits.n), factorSets: Number(sets.n) };
  };
  const submit = (token: string, content: string, body: Record<string, unknown>, filename = 'sales.csv') =>
    upload<{ id: string; status: string } & ErrorBody>(`/api/workspaces/${f.workspaceId}/fits`, token, { file: { content, filename }, fields: { settings: JSON.stringify(body) } });

  beforeAll(async () => {
    f = await workspaceWithEveryRole('Fit fixture');
  });

  it('fits a Gaussian table end to end: metrics, two joint factor sets, projections, predictions', async () => {
    const queued = await submit(f.members.analyst.token, table.csv, settings);
    expect(queued.status, JSON.stringify(queued.body)).toBe(202);
    expect(queued.body.status).toBe('queued');
    const done = await until(queued.body.id, f.members.viewer.token, finished);
    expect(done.status, done.error ?? '').toBe('done');
    expect(done.progress).toBe(1);
    expect(done.observations).toBe(table.csv.trim().split('\n').length - 1);
    expect([done.rowEntities, done.columnEntities]).toEqual([60, 30]);

    const metrics = done.metrics;
    if (!metrics) throw new Error('no metrics');
    for (const model of ['fm', 'mainEffects', 'intercept'] as const) {
      expect(typeof metrics[model].inSample.rmse).toBe('number');
      expect(typeof metrics[model].heldOut?.rmse).toBe('number');
    }
    // The interaction term is real in this design, so it must win held out.
    expect(metrics.fm.heldOut?.rmse ?? Infinity).toBeLessThan(metrics.mainEffects.heldOut?.rmse ?? 0);
    expect(metrics.mainEffects.heldOut?.rmse ?? Infinity).toBeLessThanOrEqual((metrics.intercept.heldOut?.rmse ?? 0) * 1.01);
    expect(done.convergence?.converged).toBe(true);
    expect(done.convergence?.history.length).toBeGreaterThan(1);
    expect(done.summary?.ppc.histogram.observed.length).toBeGreaterThan(0);
    expect(done.summary?.mainEffects.source).toBe('map');

    const [rowSetId, columnSetId] = done.factorSets;
    expect(rowSetId).toBeTruthy();
    expect(columnSetId).toBeTruthy();
    const rowSet = await api<{ rows: number; dims: number; jointPartnerId: string | null; workspaceId: string; format: string }>('GET', `/api/factor-sets/${rowSetId}`, { token: f.members.viewer.token });
    const columnSet = await api<{ rows: number; dims: number; jointPartnerId: string | null; workspaceId: string }>('GET', `/api/factor-sets/${columnSetId}`, { token: f.members.viewer.token });
    expect(rowSet.body).toMatchObject({ rows: 60, dims: 3, jointPartnerId: columnSetId, workspaceId: f.workspaceId, format: 'fit' });
    expect(columnSet.body).toMatchObject({ rows: 30, dims: 3, jointPartnerId: rowSetId, workspaceId: f.workspaceId });
    const projections = await api<{ items: { method: string }[] }>('GET', `/api/factor-sets/${rowSetId}/projections`, { token: f.members.viewer.token });
    expect(projections.body.items.map((p) => p.method)).toContain('pca');

    const listed = await api<{ items: { id: string; status: string }[] }>('GET', `/api/workspaces/${f.workspaceId}/fits`, { token: f.members.reviewer.token });
    expect(listed.body.items.map((x) => x.id)).toContain(done.id);

    // A pair never observed together is predicted from the factors; an unknown id is refused by name.
    const predicted = await api<{ predictions: { row: string; column: string; mean: number; interaction: number; rowKnown: boolean; columnKnown: boolean }[]; meanIs: string }>('POST', `/api/fits/${done.id}/predict`, {
      token: f.members.viewer.token,
      body: { pairs: [table.unobserved, ['shop-1', 'cat-2']] },
    });
    expect(predicted.status, JSON.stringify(predicted.body)).toBe(200);
    expect(predicted.body.meanIs).toBe('mean');
    expect(predicted.body.predictions).toHaveLength(2);
    const first = predicted.body.predictions[0];
    expect(first).toMatchObject({ row: table.unobserved[0], column: table.unobserved[1], rowKnown: true, columnKnown: true });
    expect(Number.isFinite(first?.mean)).toBe(true);
    expect(first?.interaction).not.toBe(0);
    const unknown = await api<ErrorBody>('POST', `/api/fits/${done.id}/predict`, { token: f.members.viewer.token, body: { pairs: [['shop-999', 'cat-1'], ['shop-1', 'cat-x']] } });
    expect(unknown.status).toBe(400);
    expect(unknown.body.error.code).toBe('unknown_entity');
    expect(unknown.body.error.message).toContain('shop-999');
    expect(unknown.body.error.message).toContain('cat-x');
    const cold = await api<{ predictions: { rowKnown: boolean; interaction: number }[] }>('POST', `/api/fits/${done.id}/predict`, {
      token: f.members.viewer.token,
      body: { pairs: [['shop-999', 'cat-1']], allowUnknown: true },
    });
    expect(cold.status).toBe(200);
    expect(cold.body.predictions[0]).toMatchObject({ rowKnown: false, interaction: 0 });

    expect((await api('GET', `/api/fits/${done.id}`, { token: f.outsider.token })).status).toBe(404);
    expect((await api('POST', `/api/fits/${done.id}/predict`, { token: f.outsider.token, body: { pairs: [table.unobserved] } })).status).toBe(404);
    expect((await api('DELETE', `/api/fits/${done.id}`, { token: f.members.expert.token })).status).toBe(403);
  }, 60_000);

  it('refuses bad input before anything is stored or queued', async () => {
    const before = await counts();

    const notBinary = 'shop,category,bought\na,x,0\na,y,1\nb,x,2\nb,y,0\n';
    const binary = await submit(f.members.analyst.token, notBinary, { rowColumn: 'shop', columnColumn: 'category', outcome: 'bought', likelihood: 'bernoulli', rank: 1, folds: 0 }, 'bought.csv');
    expect(binary.status, JSON.stringify(binary.body)).toBe(422);
    expect(binary.body.error).toMatchObject({ code: 'outcome_not_binary', file: 'bought.csv', line: 4, column: 'bought' });

    const unknownColumn = await submit(f.members.analyst.token, table.csv, { ...settings, outcome: 'revenue' });
    expect(unknownColumn.status).toBe(400);
    expect(unknownColumn.body.error.code).toBe('unknown_column');
    expect(unknownColumn.body.error.message).toContain('revenue');

    const nonFinite = table.csv.replace(/\n(shop-[^,\n]+,cat-[^,\n]+),[^\n]+\n/, '\n$1,abc\n');
    const infinite = await submit(f.members.analyst.token, nonFinite, settings);
    expect(infinite.status).toBe(422);
    expect(infinite.body.error).toMatchObject({ code: 'invalid_value', line: 2, column: 'sales' });

    const badSettings = await submit(f.members.analyst.token, table.csv, { ...settings, rank: 0 });
    expect(badSettings.status).toBe(400);
    expect(badSettings.body.error.message).toContain('rank');

    const notJson = await upload<ErrorBody>(`/api/workspaces/${f.workspaceId}/fits`, f.members.analyst.token, { file: { content: table.csv, filename: 'sales.csv' }, fields: { settings: '{rank: 3' } });
    expect(notJson.status).toBe(400);

    expect(await counts()).toEqual(before);
  });

  it('lets owners and analysts fit; other members read; outsiders see nothing', async () => {
    for (const role of ['expert', 'presenter', 'reviewer', 'viewer'] as const) {
      const answer = await submit(f.members[role].token, table.csv, settings);
      expect(answer.status, role).toBe(403);
    }
    expect((await submit(f.outsider.token, table.csv, settings)).status).toBe(404);
    expect((await api('GET', `/api/workspaces/${f.workspaceId}/fits`, { token: f.outsider.token })).status).toBe(404);
    expect((await api('GET', `/api/workspaces/${f.workspaceId}/fits`, { token: f.members.viewer.token })).status).toBe(200);
    expect((await api('GET', '/api/fits/not-a-uuid', { token: f.members.viewer.token })).status).toBe(404);
  });

  it('cancels a running fit, stores nothing of it, and deletes the record', async () => {
    const before = await counts();
    // Large enough to run for a while: 200 × 100 pairs, K = 5, 10 folds, variational.
    const sim = simulate({ rows: 200, columns: 100, rank: 5, likelihood: 'gaussian', seed: 5 });
    const d = sim.design;
    const lines = ['r,c,y'];
    for (let t = 0; t < d.n; t++) lines.push(`r${d.row[t]},c${d.column[t]},${(d.y[t] as number).toFixed(5)}`);
    const queued = await submit(f.members.owner.token, `${lines.join('\n')}\n`, { rowColumn: 'r', columnColumn: 'c', outcome: 'y', likelihood: 'gaussian', rank: 5, folds: 10, method: 'variational' }, 'big.csv');
    expect(queued.status, JSON.stringify(queued.body)).toBe(202);
    const running = await until(queued.body.id, f.members.analyst.token, (x) => x.status === 'running' || finished(x));
    expect(running.status).toBe('running');
    const cancelled = await api<WireFit>('POST', `/api/fits/${queued.body.id}/cancel`, { token: f.members.analyst.token });
    expect(cancelled.status).toBe(200);
    expect(cancelled.body.status).toBe('cancelled');
    expect((await api('POST', `/api/fits/${queued.body.id}/cancel`, { token: f.members.analyst.token })).status).toBe(409);
    // Give the worker time to notice (it checks once a second) and stop.
    await new Promise((r) => setTimeout(r, 2500));
    const after = await until(queued.body.id, f.members.analyst.token, () => true);
    expect(after.status).toBe('cancelled');
    expect(after.factorSets).toEqual([null, null]);
    expect(await counts()).toEqual({ fits: before.fits + 1, factorSets: before.factorSets });
    expect((await api('DELETE', `/api/fits/${queued.body.id}`, { token: f.members.analyst.token })).status).toBe(204);
    expect((await api('GET', `/api/fits/${queued.body.id}`, { token: f.members.analyst.token })).status).toBe(404);
    expect((await counts()).fits).toBe(before.fits);
  }, 60_000);
});
