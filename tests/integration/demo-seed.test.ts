import { sql } from 'kysely';
import { describe, expect, it } from 'vitest';
import { DEMO_WORKSPACE_NAME } from '@/db/seed';
import { testDb } from '../support/fixtures';

/** The demo seed goes through the upload path (parse → align → store); check what it left. */
describe('demo seed', () => {
  it('holds the survey embedding: 5,000 respondents, 200 aligned draws, wider spread for thinner answers', async () => {
    const db = testDb();
    const set = await db
      .selectFrom('factor_sets as f')
      .innerJoin('workspaces as w', 'w.id', 'f.workspace_id')
      .where('w.name', '=', DEMO_WORKSPACE_NAME)
      .where('f.name', 'like', 'Survey embedding%')
      .selectAll('f')
      .executeTakeFirstOrThrow();
    expect([set.rows, set.dims, set.draws, set.format]).toEqual([5000, 6, 200, 'npy']);
    expect(set.parse_report).toMatchObject({ alignment: { method: 'generalised-procrustes', converged: true } });
    const blocks = await db
      .selectFrom('factor_set_blocks')
      .select(['kind', (eb) => eb.fn.sum<number>('row_count').as('rows')])
      .where('factor_set_id', '=', set.id)
      .groupBy('kind')
      .execute();
    expect(Object.fromEntries(blocks.map((b) => [b.kind, Number(b.rows)]))).toEqual({ values: 5000, sd: 5000, draws: 5000 });

    // The simulation gives respondents who answered few questions noisier draws (sd 0.6/√answered).
    const { rows } = await sql<{ few: number; many: number }>`
      select avg(spread) filter (where (metadata ->> 'answered')::int < 10) as few,
             avg(spread) filter (where (metadata ->> 'answered')::int > 30) as many
      from factor_set_entities where factor_set_id = ${set.id}`.execute(db);
    const spread = rows[0] ?? { few: 0, many: 0 };
    expect(Number(spread.few)).toBeGreaterThan(1.5 * Number(spread.many));
    const labelled = await db.selectFrom('factor_set_entities').select(['label', 'metadata']).where('factor_set_id', '=', set.id).where('idx', '=', 0).executeTakeFirstOrThrow();
    expect(labelled.label).toBe('Respondent 0001');
    expect(labelled.metadata).toMatchObject({ segment: 'segment A', region: 'north' });
  });

  it('holds the Larkspur shop factors with 6 dimensions and footfall kept as metadata', async () => {
    const set = await testDb().selectFrom('factor_sets').selectAll().where('name', '=', 'Larkspur shop factors').executeTakeFirstOrThrow();
    expect([set.rows, set.dims, set.draws]).toEqual([120, 6, 0]);
    expect(set.metadata_columns).toEqual(
      expect.arrayContaining([
        { name: 'kind', type: 'category' },
        { name: 'footfall_k', type: 'number' },
        { name: 'opened', type: 'date' },
      ]),
    );
  });
});
