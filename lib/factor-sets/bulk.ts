import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { Compilable, Kysely } from 'kysely';
import { from as copyFrom } from 'pg-copy-streams';
import { poolOf } from '@/db/connection';
import type { Database } from '@/db/types';

/** One transaction on a raw connection: Kysely-built queries, plus COPY FROM STDIN. */
export interface BulkTransaction {
  /** Builds queries (never executes them: run them with `execute`). */
  builder: Kysely<Database>;
  execute<R>(query: Compilable<R>): Promise<R[]>;
  /** Streams text-format COPY data (`copy … from stdin`), chunk by chunk. */
  copy(statement: string, chunks: Iterable<string> | AsyncIterable<string>): Promise<void>;
}

/**
 * Runs `fn` in one transaction on a dedicated connection. Bulk imports need COPY — about four times
 * faster than batched inserts for a million entities (measured: 5.9 s against 20 s) — which Kysely
 * does not expose; everything else is still built with Kysely.
 */
export async function withBulkTransaction<T>(db: Kysely<Database>, fn: (tx: BulkTransaction) => Promise<T>): Promise<T> {
  const client = await poolOf(db).connect();
  const tx: BulkTransaction = {
    builder: db,
    async execute<R>(query: Compilable<R>): Promise<R[]> {
      const compiled = query.compile();
      const result = await client.query(compiled.sql, compiled.parameters as unknown[]);
      return result.rows as R[];
    },
    async copy(statement, chunks) {
      await pipeline(Readable.from(chunks), client.query(copyFrom(statement)));
    },
  };
  let broken: Error | undefined;
  try {
    await client.query('begin');
    const result = await fn(tx);
    await client.query('commit');
    return result;
  } catch (error) {
    await client.query('rollback').catch((rollbackError: unknown) => {
      console.error('bulk import: rollback failed; the connection is discarded', rollbackError);
      broken = rollbackError instanceof Error ? rollbackError : new Error(String(rollbackError));
    });
    throw error;
  } finally {
    // A connection whose rollback failed is in an unknown state: destroy it rather than pool it.
    client.release(broken);
  }
}

/** Escapes a value for COPY's text format; null is \N. */
export function copyField(value: string | number | null): string {
  if (value === null) return '\\N';
  if (typeof value === 'number') return Number.isFinite(value) ? String(value) : '\\N';
  return value.replace(/[\\\t\n\r]/g, (c) => (c === '\\' ? '\\\\' : c === '\t' ? '\\t' : c === '\n' ? '\\n' : '\\r'));
}
