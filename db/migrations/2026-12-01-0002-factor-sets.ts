import { type Kysely, sql } from 'kysely';

export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable('factor_sets')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('workspace_id', 'uuid', (c) => c.notNull().references('workspaces.id').onDelete('cascade'))
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('format', 'text', (c) => c.notNull())
    .addColumn('rows', 'integer', (c) => c.notNull().check(sql`rows > 0`))
    .addColumn('dims', 'integer', (c) => c.notNull().check(sql`dims > 0`))
    .addColumn('draws', 'integer', (c) => c.notNull().defaultTo(0))
    .addColumn('block_rows', 'integer', (c) => c.notNull())
    .addColumn('draw_block_rows', 'integer')
    .addColumn('source_name', 'text', (c) => c.notNull())
    .addColumn('source_bytes', 'bigint', (c) => c.notNull())
    .addColumn('checksum_sha256', 'text', (c) => c.notNull())
    .addColumn('metadata_columns', 'jsonb', (c) => c.notNull().defaultTo(sql`'[]'::jsonb`))
    .addColumn('parse_report', 'jsonb', (c) => c.notNull())
    .addColumn('joint_partner_id', 'uuid', (c) => c.references('factor_sets.id').onDelete('set null'))
    .addColumn('created_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex('factor_sets_workspace_idx').on('factor_sets').columns(['workspace_id', 'created_at']).execute();

  // No foreign key here on purpose: its per-row check cost 8 s per million entities on import
  // (measured with EXPLAIN ANALYZE). Entities go with their factor set through the trigger below,
  // and are only ever written in the same transaction as it.
  await db.schema
    .createTable('factor_set_entities')
    .addColumn('factor_set_id', 'uuid', (c) => c.notNull())
    .addColumn('idx', 'integer', (c) => c.notNull())
    .addColumn('entity_id', 'text', (c) => c.notNull())
    .addColumn('label', 'text')
    .addColumn('metadata', 'jsonb')
    .addColumn('spread', 'real')
    .addPrimaryKeyConstraint('factor_set_entities_pkey', ['factor_set_id', 'idx'])
    .addUniqueConstraint('factor_set_entities_entity_key', ['factor_set_id', 'entity_id'])
    .execute();

  await sql`
    create function factor_sets_delete_entities() returns trigger language plpgsql as $$
    begin
      delete from factor_set_entities where factor_set_id in (select id from deleted_sets);
      return null;
    end $$
  `.execute(db);
  await sql`
    create trigger factor_sets_delete_entities after delete on factor_sets
    referencing old table as deleted_sets for each statement execute function factor_sets_delete_entities()
  `.execute(db);

  // Float32 little-endian row-major matrices cut into row blocks of a few MB each, so that no single
  // value is ever large (node-pg moves bytea as hex text, doubling it).
  await db.schema
    .createTable('factor_set_blocks')
    .addColumn('factor_set_id', 'uuid', (c) => c.notNull().references('factor_sets.id').onDelete('cascade'))
    .addColumn('kind', 'text', (c) => c.notNull().check(sql`kind in ('values', 'sd', 'draws')`))
    .addColumn('block', 'integer', (c) => c.notNull())
    .addColumn('row_start', 'integer', (c) => c.notNull())
    .addColumn('row_count', 'integer', (c) => c.notNull())
    .addColumn('data', 'bytea', (c) => c.notNull())
    .addPrimaryKeyConstraint('factor_set_blocks_pkey', ['factor_set_id', 'kind', 'block'])
    .execute();

  await db.schema
    .createTable('factor_set_alignments')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('factor_set_id', 'uuid', (c) => c.notNull().references('factor_sets.id').onDelete('cascade'))
    .addColumn('target_id', 'uuid', (c) => c.notNull().references('factor_sets.id').onDelete('cascade'))
    .addColumn('matched', 'integer', (c) => c.notNull())
    .addColumn('disparity', 'double precision', (c) => c.notNull())
    .addColumn('rotation', 'jsonb', (c) => c.notNull())
    .addColumn('created_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  await sql`drop trigger if exists factor_sets_delete_entities on factor_sets`.execute(db);
  await sql`drop function if exists factor_sets_delete_entities()`.execute(db);
  for (const table of ['factor_set_alignments', 'factor_set_blocks', 'factor_set_entities', 'factor_sets']) {
    await db.schema.dropTable(table).ifExists().execute();
  }
}
