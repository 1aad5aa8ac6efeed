import { type Kysely, sql } from 'kysely';

/**
 * The neighbour-graph cache (lib/projections/knn-cache.ts): one kNN graph per factor set and
 * metric, shared by the projection and clustering jobs, valid while input_checksum equals the
 * factor set's checksum. And HDBSCAN as a second cluster-proposal method.
 */
export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable('knn_graphs')
    .addColumn('factor_set_id', 'uuid', (c) => c.notNull().references('factor_sets.id').onDelete('cascade'))
    .addColumn('metric', 'text', (c) => c.notNull().check(sql`metric in ('euclidean', 'cosine')`))
    .addColumn('input_checksum', 'text', (c) => c.notNull())
    .addColumn('n', 'integer', (c) => c.notNull())
    .addColumn('k', 'integer', (c) => c.notNull().check(sql`k >= 1`))
    // false: NN-descent (lib/projection/knn-approx.ts), with the seed it was drawn with.
    .addColumn('exact', 'boolean', (c) => c.notNull())
    .addColumn('seed', 'integer', (c) => c.notNull())
    .addColumn('method', 'text', (c) => c.notNull())
    // n × k little-endian Int32 indices and Float32 distances, row-major.
    .addColumn('indices', 'bytea', (c) => c.notNull())
    .addColumn('distances', 'bytea', (c) => c.notNull())
    .addColumn('duration_ms', 'integer', (c) => c.notNull())
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addPrimaryKeyConstraint('knn_graphs_pkey', ['factor_set_id', 'metric'])
    .execute();
  // PostgreSQL named 0004's column check clusterings_method_check.
  await sql`alter table clusterings drop constraint if exists clusterings_method_check`.execute(db);
  await sql`alter table clusterings add constraint clusterings_method_check check (method in ('kmeans', 'hdbscan'))`.execute(db);
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`delete from clusterings where method = 'hdbscan'`.execute(db);
  await sql`alter table clusterings drop constraint if exists clusterings_method_check`.execute(db);
  await sql`alter table clusterings add constraint clusterings_method_check check (method in ('kmeans'))`.execute(db);
  await db.schema.dropTable('knn_graphs').ifExists().execute();
}
