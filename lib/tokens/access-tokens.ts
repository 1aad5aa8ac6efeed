import type { AccessTokenRow } from '@/db/types';
import { ACCESS_TOKEN_PREFIX, hashSecret, newSecret } from '@/lib/auth/secrets';
import type { DbOrTx } from '@/lib/users/users';

export interface AccessToken {
  id: string;
  name: string;
  prefix: string;
  createdAt: Date;
  lastUsedAt: Date | null;
  revokedAt: Date | null;
}

export function toAccessToken(row: AccessTokenRow): AccessToken {
  return {
    id: row.id,
    name: row.name,
    prefix: row.token_prefix,
    createdAt: row.created_at,
    lastUsedAt: row.last_used_at,
    revokedAt: row.revoked_at,
  };
}

/** Creates a token and returns its secret, which is shown once and never stored in clear. */
export async function createAccessToken(
  db: DbOrTx,
  userId: string,
  name: string,
): Promise<{ token: string; accessToken: AccessToken }> {
  const token = newSecret(ACCESS_TOKEN_PREFIX);
  const row = await db
    .insertInto('access_tokens')
    .values({ user_id: userId, name, token_hash: hashSecret(token), token_prefix: token.slice(0, 10) })
    .returningAll()
    .executeTakeFirstOrThrow();
  return { token, accessToken: toAccessToken(row) };
}

export async function listAccessTokens(db: DbOrTx, userId: string): Promise<AccessToken[]> {
  const rows = await db
    .selectFrom('access_tokens')
    .selectAll()
    .where('user_id', '=', userId)
    .orderBy('created_at', 'desc')
    .execute();
  return rows.map(toAccessToken);
}

/** Revokes one of the person's own tokens; false when there is no such active token. */
export async function revokeAccessToken(db: DbOrTx, userId: string, tokenId: string): Promise<boolean> {
  const result = await db
    .updateTable('access_tokens')
    .set({ revoked_at: new Date() })
    .where('id', '=', tokenId)
    .where('user_id', '=', userId)
    .where('revoked_at', 'is', null)
    .executeTakeFirst();
  return result.numUpdatedRows > 0n;
}

/** The owner of an active token, recording its use. */
export async function userIdForToken(db: DbOrTx, token: string): Promise<string | null> {
  if (!token.startsWith(ACCESS_TOKEN_PREFIX) || token.length > 200) return null;
  const row = await db
    .updateTable('access_tokens')
    .set({ last_used_at: new Date() })
    .where('token_hash', '=', hashSecret(token))
    .where('revoked_at', 'is', null)
    .returning('user_id')
    .executeTakeFirst();
  return row?.user_id ?? null;
}
