import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, conflict } from '@/lib/api/errors';
import { serverEnv } from '@/lib/env';
import { sendMail } from '@/lib/mail/mailer';
import { passwordResetMail } from '@/lib/mail/templates';
import { createUser, findUserRowByEmail, isUniqueViolation, setPassword, type User } from '@/lib/users/users';
import { clearAccountFailures } from './rate-limit';
import { hashPassword, hashSecret, newSecret } from './secrets';

export async function signUp(db: Kysely<Database>, input: { name: string; email: string; password: string }): Promise<User> {
  const passwordHash = await hashPassword(input.password);
  try {
    return await createUser(db, { email: input.email, name: input.name, passwordHash });
  } catch (error) {
    if (isUniqueViolation(error, 'users_email_key')) {
      throw conflict('email_taken', 'An account with this e-mail already exists; sign in or reset its password');
    }
    throw error;
  }
}

/**
 * Mails a reset link when the address has an account. The caller shows the same answer either way,
 * so the form does not reveal who has an account.
 */
export async function requestPasswordReset(db: Kysely<Database>, email: string): Promise<void> {
  const user = await findUserRowByEmail(db, email);
  if (!user) return;
  const env = serverEnv();
  const token = newSecret();
  await db
    .insertInto('password_resets')
    .values({
      user_id: user.id,
      token_hash: hashSecret(token),
      expires_at: new Date(Date.now() + env.PASSWORD_RESET_TTL_MINUTES * 60_000),
    })
    .execute();
  try {
    await sendMail(
      passwordResetMail({
        to: user.email,
        url: new URL(`/reset-password/${token}`, env.APP_URL).toString(),
        minutes: env.PASSWORD_RESET_TTL_MINUTES,
      }),
    );
  } catch (error) {
    // Logged, not shown: an error only for existing accounts would tell who has one.
    console.error('password reset mail could not be sent', error);
  }
}

/**
 * Spends a reset link: sets the password, ends every session, revokes every access token (a reset
 * usually means the old credentials are not safe) and voids the account's other links.
 */
export async function resetPassword(db: Kysely<Database>, token: string, password: string): Promise<void> {
  const passwordHash = await hashPassword(password);
  await db.transaction().execute(async (tx) => {
    const reset = await tx
      .selectFrom('password_resets')
      .selectAll()
      .where('token_hash', '=', hashSecret(token))
      .forUpdate()
      .executeTakeFirst();
    if (!reset || reset.used_at || reset.expires_at.getTime() <= Date.now()) {
      throw new ApiError(400, 'reset_link_invalid', 'This reset link is invalid, used or expired; ask for a new one');
    }
    await setPassword(tx, reset.user_id, passwordHash);
    await tx.updateTable('access_tokens').set({ revoked_at: new Date() }).where('user_id', '=', reset.user_id).where('revoked_at', 'is', null).execute();
    await tx
      .updateTable('password_resets')
      .set({ used_at: new Date() })
      .where('user_id', '=', reset.user_id)
      .where('used_at', 'is', null)
      .execute();
    const user = await tx.selectFrom('users').select('email').where('id', '=', reset.user_id).executeTakeFirstOrThrow();
    await clearAccountFailures(tx, user.email);
  });
}
