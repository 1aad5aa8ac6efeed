import type { SignInLimits } from './rate-limit';
import { clearAccountFailures, recordSignInFailure, signInBlocked } from './rate-limit';
import { verifyPassword } from './secrets';
import { type DbOrTx, findUserRowByEmail, toUser, type User } from '@/lib/users/users';

export type PasswordSignInResult = { ok: true; user: User } | { ok: false; reason: 'invalid' | 'rate_limited' };

/** The one password check, used by the sign-in form and by `POST /api/tokens`. */
export async function checkPasswordSignIn(
  db: DbOrTx,
  input: { email: string; password: string; address: string },
  limits: SignInLimits,
): Promise<PasswordSignInResult> {
  const email = input.email.toLowerCase();
  if (await signInBlocked(db, email, input.address, limits)) return { ok: false, reason: 'rate_limited' };
  const row = await findUserRowByEmail(db, email);
  const valid = await verifyPassword(row?.password_hash ?? null, input.password);
  if (!row || !valid) {
    await recordSignInFailure(db, email, input.address);
    return { ok: false, reason: 'invalid' };
  }
  await clearAccountFailures(db, email);
  return { ok: true, user: toUser(row) };
}
