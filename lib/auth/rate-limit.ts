import { sql } from 'kysely';
import type { DbOrTx } from '@/lib/users/users';

export interface SignInLimits {
  maxPerAccount: number;
  maxPerAddress: number;
  windowMinutes: number;
}

/**
 * Failed password checks are kept in PostgreSQL, so the limit holds across every app process.
 * An account is locked after `maxPerAccount` failures in the window (guessing one person's password),
 * a client address after `maxPerAddress` (trying one password on many accounts).
 */
export async function signInBlocked(db: DbOrTx, email: string, address: string, limits: SignInLimits): Promise<boolean> {
  const since = sql<Date>`now() - make_interval(mins => ${limits.windowMinutes})`;
  const row = await db
    .selectFrom('sign_in_failures')
    .select([
      (eb) => eb.fn.countAll<number>().filterWhere('email', '=', email).as('forAccount'),
      (eb) => eb.fn.countAll<number>().filterWhere('address', '=', address).as('forAddress'),
    ])
    .where('created_at', '>', since)
    .where((eb) => eb.or([eb('email', '=', email), eb('address', '=', address)]))
    .executeTakeFirstOrThrow();
  return Number(row.forAccount) >= limits.maxPerAccount || Number(row.forAddress) >= limits.maxPerAddress;
}

export async function recordSignInFailure(db: DbOrTx, email: string, address: string): Promise<void> {
  await db.insertInto('sign_in_failures').values({ email, address }).execute();
}

/** A successful sign-in clears the account's failures; the address keeps its count. */
export async function clearAccountFailures(db: DbOrTx, email: string): Promise<void> {
  await db.deleteFrom('sign_in_failures').where('email', '=', email).execute();
}

/** The client address as the server saw it; behind a proxy, the proxy sets x-forwarded-for. */
export function clientAddress(headers: Headers): string {
  const forwarded = headers.get('x-forwarded-for')?.split(',')[0]?.trim();
  return forwarded || headers.get('x-real-ip') || 'unknown';
}
