import { Kysely, PostgresDialect } from 'kysely';
import pg from 'pg';
import type { Database } from './types';

// bigint counts arrive as strings by default; ours stay far below 2^53.
pg.types.setTypeParser(pg.types.builtins.INT8, (value: string) => Number.parseInt(value, 10));

/** Builds a Kysely instance. The app uses the single one in db/index.ts; scripts and tests make their own. */
export function createDb(connectionString: string, maxConnections = 10): Kysely<Database> {
  const pool = new pg.Pool({ connectionString, max: maxConnections });
  // An idle connection dropped by the server (restart, shutdown) must not crash the process.
  pool.on('error', (error) => console.error('postgres: idle connection lost:', error.message));
  return new Kysely<Database>({ dialect: new PostgresDialect({ pool }) });
}
