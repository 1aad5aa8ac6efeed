import { type Kysely, sql } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable('annotations')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('factor_set_id', 'uuid', (c) => c.notNull().references('factor_sets.id').onDelete('cascade'))
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('color', 'text', (c) => c.notNull().check(sql`color ~ '^#[0-9a-f]{6}$'`))
    .addColumn('description', 'text', (c) => c.notNull().defaultTo(''))
    // Members by entity: the factor set's row indices (entities never change once imported), sorted,
    // as uint32 little-endian. One value per member keeps a million-point annotation at 4 MB and makes
    // every edit one row write, so a version check covers name, colour and membership together.
    .addColumn('members', 'bytea', (c) => c.notNull())
    .addColumn('member_count', 'integer', (c) => c.notNull())
    .addColumn('version', 'integer', (c) => c.notNull().defaultTo(1))
    .addColumn('source_clustering_id', 'uuid', (c) => c.references('clusterings.id').onDelete('set null'))
    .addColumn('created_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn('updated_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await sql`create unique index annotations_name_idx on annotations (factor_set_id, lower(name))`.execute(db);

  // History outlives the annotation (a deletion is itself a change worth seeing), so no foreign key
  // to annotations; it goes with the factor set.
  await db.schema
    .createTable('annotation_changes')
    .addColumn('id', 'bigserial', (c) => c.primaryKey())
    .addColumn('factor_set_id', 'uuid', (c) => c.notNull().references('factor_sets.id').onDelete('cascade'))
    .addColumn('annotation_id', 'uuid', (c) => c.notNull())
    .addColumn('version', 'integer', (c) => c.notNull())
    .addColumn('action', 'text', (c) => c.notNull().check(sql`action in ('created', 'updated', 'deleted')`))
    .addColumn('changes', 'jsonb', (c) => c.notNull())
    .addColumn('actor_id', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex('annotation_changes_annotation_idx').on('annotation_changes').columns(['annotation_id', 'id']).execute();

  await db.schema
    .createTable('views')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('workspace_id', 'uuid', (c) => c.notNull().references('workspaces.id').onDelete('cascade'))
    .addColumn('projection_id', 'uuid', (c) => c.notNull().references('projections.id').onDelete('cascade'))
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('state', 'jsonb', (c) => c.notNull())
    .addColumn('version', 'integer', (c) => c.notNull().defaultTo(1))
    .addColumn('created_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex('views_workspace_idx').on('views').columns(['workspace_id', 'created_at']).execute();

  // The last projection settings used per factor set (a factor set lives in one workspace, so this
  // is per workspace too), offered as the defaults of the next projection form.
  await db.schema
    .createTable('factor_set_preferences')
    .addColumn('factor_set_id', 'uuid', (c) => c.primaryKey().references('factor_sets.id').onDelete('cascade'))
    .addColumn('last_projection', 'jsonb', (c) => c.notNull())
    .addColumn('updated_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  await db.schema.dropTable('factor_set_preferences').ifExists().execute();
  await db.schema.dropTable('views').ifExists().execute();
  await db.schema.dropTable('annotation_changes').ifExists().execute();
  await db.schema.dropTable('annotations').ifExists().execute();
}
