import { Kysely, PostgresDialect } from 'kysely';
import pg from 'pg';
import type { Database } from './types';

// bigint counts arrive as strings by default; ours stay far below 2^53.
pg.types.setTypeParser(pg.types.builtins.INT8, (value: string) => Number.parseInt(value, 10));

const pools = new WeakMap<Kysely<Database>, pg.Pool>();

/**
 * The pool behind a Kysely instance, for the one job Kysely has no API for: COPY in bulk imports.
 * Queries are still built with Kysely and only executed on the raw connection.
 */
export function poolOf(db: Kysely<Database>): pg.Pool {
  const pool = pools.get(db);
  if (!pool) throw new Error('poolOf: this Kysely instance was not made by createDb');
  return pool;
}

/** Builds a Kysely instance. The app uses the single one in db/index.ts; scripts and tests make their own. */
export function createDb(connectionString: string, maxConnections = 10): Kysely<Database> {
  const pool = new pg.Pool({ connectionString, max: maxConnections });
  // An idle connection dropped by the server (restart, shutdown) must not crash the process.
  pool.on('error', (error) => console.error('postgres: idle connection lost:', error.message));
  const db = new Kysely<Database>({ dialect: new PostgresDialect({ pool }) });
  pools.set(db, pool);
  return db;
}
