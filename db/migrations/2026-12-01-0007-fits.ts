import { type Kysely, sql } from 'kysely';

/**
 * Factorization-machine fits (lib/fits): one row per fit of a long observation table, its status
 * and progress while the job runs, and afterwards the metrics, convergence report, summaries for
 * the fit page, the fitted model (for predictions) and the two factor sets it created.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable('fits')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('workspace_id', 'uuid', (c) => c.notNull().references('workspaces.id').onDelete('cascade'))
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('source_name', 'text', (c) => c.notNull())
    .addColumn('source_bytes', 'bigint', (c) => c.notNull())
    .addColumn('checksum_sha256', 'text', (c) => c.notNull())
    // Resolved settings (every default filled in), as the job ran them.
    .addColumn('settings', 'jsonb', (c) => c.notNull())
    .addColumn('status', 'text', (c) => c.notNull().check(sql`status in ('queued', 'running', 'done', 'failed', 'cancelled')`))
    .addColumn('progress', 'real', (c) => c.notNull().defaultTo(0))
    .addColumn('phase', 'text')
    .addColumn('error', 'text')
    // Shape of the design, known once the upload was read (before the job runs).
    .addColumn('observations', 'integer', (c) => c.notNull())
    .addColumn('row_entities', 'integer', (c) => c.notNull())
    .addColumn('column_entities', 'integer', (c) => c.notNull())
    .addColumn('warnings', 'jsonb', (c) => c.notNull().defaultTo(sql`'[]'::jsonb`))
    .addColumn('metrics', 'jsonb')
    .addColumn('convergence', 'jsonb')
    .addColumn('summary', 'jsonb')
    // The fitted model for predictions: a JSON header and float64 arrays (lib/fits/model-bytes.ts).
    .addColumn('model', 'bytea')
    .addColumn('row_factor_set_id', 'uuid', (c) => c.references('factor_sets.id').onDelete('set null'))
    .addColumn('column_factor_set_id', 'uuid', (c) => c.references('factor_sets.id').onDelete('set null'))
    .addColumn('job_id', 'text')
    .addColumn('attempts', 'integer', (c) => c.notNull().defaultTo(0))
    .addColumn('created_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn('started_at', 'timestamptz')
    .addColumn('finished_at', 'timestamptz')
    .addColumn('duration_ms', 'integer')
    .execute();
  await db.schema.createIndex('fits_workspace_idx').on('fits').columns(['workspace_id', 'created_at']).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable('fits').ifExists().execute();
}
