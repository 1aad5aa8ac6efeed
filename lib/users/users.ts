import type { Kysely, Transaction } from 'kysely';
import type { Database, UserRow } from '@/db/types';

export type DbOrTx = Kysely<Database> | Transaction<Database>;

/** A person as the rest of the app sees them: never the password hash. */
export interface User {
  id: string;
  email: string;
  name: string | null;
  emailVerified: Date | null;
  createdAt: Date;
}

export function toUser(row: UserRow): User {
  return {
    id: row.id,
    email: row.email,
    name: row.name,
    emailVerified: row.email_verified_at,
    createdAt: row.created_at,
  };
}

export function findUserRowByEmail(db: DbOrTx, email: string): Promise<UserRow | undefined> {
  return db.selectFrom('users').selectAll().where('email', '=', email.toLowerCase()).executeTakeFirst();
}

export function findUserRowById(db: DbOrTx, id: string): Promise<UserRow | undefined> {
  return db.selectFrom('users').selectAll().where('id', '=', id).executeTakeFirst();
}

export async function createUser(
  db: DbOrTx,
  input: { email: string; name: string | null; passwordHash: string | null; emailVerified?: Date | null },
): Promise<User> {
  const row = await db
    .insertInto('users')
    .values({
      email: input.email.toLowerCase(),
      name: input.name,
      password_hash: input.passwordHash,
      email_verified_at: input.emailVerified ?? null,
    })
    .returningAll()
    .executeTakeFirstOrThrow();
  return toUser(row);
}

/** Sets a new password and ends every existing session of this person. */
export async function setPassword(db: DbOrTx, userId: string, passwordHash: string): Promise<void> {
  await db
    .updateTable('users')
    .set((eb) => ({ password_hash: passwordHash, session_version: eb('session_version', '+', 1) }))
    .where('id', '=', userId)
    .execute();
}

/** PostgreSQL's unique_violation, for turning a race on a unique key into a clear message. */
export function isUniqueViolation(error: unknown, constraint?: string): boolean {
  if (typeof error !== 'object' || error === null) return false;
  const e = error as { code?: unknown; constraint?: unknown };
  return e.code === '23505' && (constraint === undefined || e.constraint === constraint);
}
