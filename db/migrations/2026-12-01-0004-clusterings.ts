import { type Kysely, sql } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable('clusterings')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('factor_set_id', 'uuid', (c) => c.notNull().references('factor_sets.id').onDelete('cascade'))
    .addColumn('method', 'text', (c) => c.notNull().check(sql`method in ('kmeans')`))
    .addColumn('params', 'jsonb', (c) => c.notNull())
    .addColumn('params_key', 'text', (c) => c.notNull())
    .addColumn('seed', 'integer', (c) => c.notNull())
    .addColumn('input_checksum', 'text', (c) => c.notNull())
    .addColumn('status', 'text', (c) => c.notNull().check(sql`status in ('queued', 'running', 'done', 'failed', 'cancelled')`))
    .addColumn('progress', 'real', (c) => c.notNull().defaultTo(0))
    .addColumn('phase', 'text')
    .addColumn('error', 'text')
    .addColumn('k', 'integer')
    .addColumn('scores', 'jsonb')
    .addColumn('mean_silhouette', 'double precision')
    // Int32 and float32 little-endian, one value per entity: 4 MB for a million entities.
    .addColumn('labels', 'bytea')
    .addColumn('silhouette', 'bytea')
    .addColumn('job_id', 'text')
    .addColumn('created_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn('finished_at', 'timestamptz')
    .addColumn('duration_ms', 'integer')
    .execute();
  await sql`
    create unique index clusterings_dedup_idx on clusterings (factor_set_id, input_checksum, method, params_key, seed)
    where status in ('queued', 'running', 'done')
  `.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable('clusterings').ifExists().execute();
}
