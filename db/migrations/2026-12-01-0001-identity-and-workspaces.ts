import { type Kysely, sql } from 'kysely';

const ROLES = sql`('owner', 'analyst', 'expert', 'presenter', 'reviewer', 'viewer')`;

export async function up(db: Kysely<any>): Promise<void> {
  await db.schema
    .createTable('users')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('email', 'text', (c) => c.notNull().check(sql`email = lower(email)`))
    .addColumn('name', 'text')
    .addColumn('password_hash', 'text')
    .addColumn('email_verified_at', 'timestamptz')
    .addColumn('session_version', 'integer', (c) => c.notNull().defaultTo(1))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addUniqueConstraint('users_email_key', ['email'])
    .execute();

  await db.schema
    .createTable('verification_tokens')
    .addColumn('identifier', 'text', (c) => c.notNull())
    .addColumn('token', 'text', (c) => c.notNull())
    .addColumn('expires_at', 'timestamptz', (c) => c.notNull())
    .addPrimaryKeyConstraint('verification_tokens_pkey', ['identifier', 'token'])
    .execute();

  await db.schema
    .createTable('workspaces')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('created_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addColumn('updated_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();

  await db.schema
    .createTable('memberships')
    .addColumn('workspace_id', 'uuid', (c) => c.notNull().references('workspaces.id').onDelete('cascade'))
    .addColumn('user_id', 'uuid', (c) => c.notNull().references('users.id').onDelete('cascade'))
    .addColumn('role', 'text', (c) => c.notNull().check(sql`role in ${ROLES}`))
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .addPrimaryKeyConstraint('memberships_pkey', ['workspace_id', 'user_id'])
    .execute();
  await db.schema.createIndex('memberships_user_idx').on('memberships').column('user_id').execute();

  await db.schema
    .createTable('invitations')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('workspace_id', 'uuid', (c) => c.notNull().references('workspaces.id').onDelete('cascade'))
    .addColumn('email', 'text', (c) => c.notNull().check(sql`email = lower(email)`))
    .addColumn('role', 'text', (c) => c.notNull().check(sql`role in ${ROLES}`))
    .addColumn('token_hash', 'text', (c) => c.notNull().unique())
    .addColumn('invited_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('expires_at', 'timestamptz', (c) => c.notNull())
    .addColumn('accepted_at', 'timestamptz')
    .addColumn('accepted_by', 'uuid', (c) => c.references('users.id').onDelete('set null'))
    .addColumn('revoked_at', 'timestamptz')
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex('invitations_workspace_idx').on('invitations').column('workspace_id').execute();

  await db.schema
    .createTable('access_tokens')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('user_id', 'uuid', (c) => c.notNull().references('users.id').onDelete('cascade'))
    .addColumn('name', 'text', (c) => c.notNull())
    .addColumn('token_hash', 'text', (c) => c.notNull().unique())
    .addColumn('token_prefix', 'text', (c) => c.notNull())
    .addColumn('last_used_at', 'timestamptz')
    .addColumn('revoked_at', 'timestamptz')
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex('access_tokens_user_idx').on('access_tokens').column('user_id').execute();

  await db.schema
    .createTable('password_resets')
    .addColumn('id', 'uuid', (c) => c.primaryKey().defaultTo(sql`gen_random_uuid()`))
    .addColumn('user_id', 'uuid', (c) => c.notNull().references('users.id').onDelete('cascade'))
    .addColumn('token_hash', 'text', (c) => c.notNull().unique())
    .addColumn('expires_at', 'timestamptz', (c) => c.notNull())
    .addColumn('used_at', 'timestamptz')
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();

  await db.schema
    .createTable('sign_in_failures')
    .addColumn('id', 'bigserial', (c) => c.primaryKey())
    .addColumn('email', 'text', (c) => c.notNull())
    .addColumn('address', 'text', (c) => c.notNull())
    .addColumn('created_at', 'timestamptz', (c) => c.notNull().defaultTo(sql`now()`))
    .execute();
  await db.schema.createIndex('sign_in_failures_email_idx').on('sign_in_failures').columns(['email', 'created_at']).execute();
  await db.schema.createIndex('sign_in_failures_address_idx').on('sign_in_failures').columns(['address', 'created_at']).execute();
}

export async function down(db: Kysely<any>): Promise<void> {
  for (const table of [
    'sign_in_failures',
    'password_resets',
    'access_tokens',
    'invitations',
    'memberships',
    'workspaces',
    'verification_tokens',
    'users',
  ]) {
    await db.schema.dropTable(table).ifExists().execute();
  }
}
