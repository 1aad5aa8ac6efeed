import { promises as fs } from 'node:fs';
import path from 'node:path';
import { FileMigrationProvider, type Kysely, Migrator } from 'kysely';
import type { Database } from './types';

/** Applies every pending migration in db/migrations; throws with the failing migration's name. */
export async function migrateToLatest(db: Kysely<Database>): Promise<string[]> {
  const migrator = new Migrator({
    db,
    provider: new FileMigrationProvider({ fs, path, migrationFolder: path.join(import.meta.dirname, 'migrations') }),
  });
  const { error, results } = await migrator.migrateToLatest();
  const failed = results?.find((r) => r.status === 'Error');
  if (error) {
    throw new Error(`migration ${failed?.migrationName ?? '(unknown)'} failed: ${String(error)}`, { cause: error });
  }
  return (results ?? []).filter((r) => r.status === 'Success').map((r) => r.migrationName);
}
