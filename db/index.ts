import 'server-only';
import type { Kysely } from 'kysely';
import { PHASE_PRODUCTION_BUILD } from 'next/constants';
import { serverEnv } from '@/lib/env';
import { createDb } from './connection';
import type { Database } from './types';

const globalForDb = globalThis as unknown as { asterismDb?: Kysely<Database> };

// `next build` imports route modules to read their settings; no query runs then, and the pool
// connects only on first use, so the build needs no database.
const connectionString =
  process.env.NEXT_PHASE === PHASE_PRODUCTION_BUILD ? 'postgres://build.invalid/none' : serverEnv().DATABASE_URL;

/** The application's one Kysely instance (kept on globalThis so dev reloads don't leak pools). */
export const db: Kysely<Database> = globalForDb.asterismDb ?? createDb(connectionString);
globalForDb.asterismDb = db;

export type { Database } from './types';
