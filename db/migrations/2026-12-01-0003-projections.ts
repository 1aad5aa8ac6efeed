import { type Kysely, sql } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable('projections')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('factor_set_id', 'uuid', (c) => c.notNull().references('factor_sets.id').onDelete('cascade'))
    .addColumn('method', 'text', (c) => c.notNull().check(sql`method in ('pca', 'umap', 'sammon', 'tsne')`))
    .addColumn('params', 'jsonb', (c) => c.notNull())
    /** Canonical JSON of the validated params, so identical requests can be found. */
    .addColumn('params_key', 'text', (c) => c.notNull())
    .addColumn('seed', 'integer', (c) => c.notNull())
    .addColumn('input_checksum', 'text', (c) => c.notNull())
    .addColumn('status', 'text', (c) => c.notNull().check(sql`status in ('queued', 'running', 'done', 'failed', 'cancelled')`))
    .addColumn('progress', 'real', (c) => c.notNull().defaultTo(0))
    .addColumn('phase', 'text')
    .addColumn('error', 'text')
    .addColumn('quality', 'jsonb')
    .addColumn('versions', 'jsonb')
    .addColumn('job_id', 'text')
    .addColumn('attempts', 'integer', (c) => c.notNull().defaultTo(0))
    .addColumn('created_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn('started_at', 'timestamptz')
    .addColumn('finished_at', 'timestamptz')
    .addColumn('duration_ms', 'integer')
    .execute();
  await db.schema.createIndex('projections_factor_set_idx').on('projections').columns(['factor_set_id', 'created_at']).execute();
  // One live projection per input, method, settings and seed: a repeated request returns it.
  await sql`
    create unique index projections_dedup_idx on projections (factor_set_id, input_checksum, method, params_key, seed)
    where status in ('queued', 'running', 'done')
  `.execute(db);

  await db.schema
    .createTable('projection_blocks')
    .addColumn('projection_id', 'uuid', (c) => c.notNull().references('projections.id').onDelete('cascade'))
    .addColumn('kind', 'text', (c) => c.notNull().check(sql`kind in ('coords', 'fidelity')`))
    .addColumn('block', 'integer', (c) => c.notNull())
    .addColumn('row_start', 'integer', (c) => c.notNull())
    .addColumn('row_count', 'integer', (c) => c.notNull())
    .addColumn('data', 'bytea', (c) => c.notNull())
    .addPrimaryKeyConstraint('projection_blocks_pkey', ['projection_id', 'kind', 'block'])
    .execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable('projection_blocks').ifExists().execute();
  await db.schema.dropTable('projections').ifExists().execute();
}
