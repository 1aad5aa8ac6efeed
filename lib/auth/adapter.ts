import 'server-only';
import type { Adapter, AdapterUser } from 'next-auth/adapters';
import type { Kysely } from 'kysely';
import type { Database, UserRow } from '@/db/types';

function toAdapterUser(row: UserRow): AdapterUser {
  return { id: row.id, email: row.email, name: row.name, emailVerified: row.email_verified_at };
}

/**
 * The part of Auth.js's adapter contract that e-mail sign-in needs (sessions are JWTs, and there are
 * no OAuth accounts). Written against our own tables rather than @auth/kysely-adapter, whose fixed
 * camelCase schema would sit beside ours as a second users table.
 */
export function asterismAdapter(db: Kysely<Database>): Adapter {
  return {
    async createUser(user) {
      const row = await db
        .insertInto('users')
        .values({ email: user.email.toLowerCase(), name: user.name ?? null, email_verified_at: user.emailVerified })
        .returningAll()
        .executeTakeFirstOrThrow();
      return toAdapterUser(row);
    },
    async getUser(id) {
      const row = await db.selectFrom('users').selectAll().where('id', '=', id).executeTakeFirst();
      return row ? toAdapterUser(row) : null;
    },
    async getUserByEmail(email) {
      const row = await db.selectFrom('users').selectAll().where('email', '=', email.toLowerCase()).executeTakeFirst();
      return row ? toAdapterUser(row) : null;
    },
    async getUserByAccount() {
      return null;
    },
    async updateUser(user) {
      const row = await db
        .updateTable('users')
        .set({
          ...(user.name !== undefined ? { name: user.name } : {}),
          ...(user.emailVerified !== undefined ? { email_verified_at: user.emailVerified } : {}),
        })
        .where('id', '=', user.id)
        .returningAll()
        .executeTakeFirstOrThrow();
      return toAdapterUser(row);
    },
    async createVerificationToken(token) {
      await db
        .insertInto('verification_tokens')
        .values({ identifier: token.identifier, token: token.token, expires_at: token.expires })
        .execute();
      return token;
    },
    async useVerificationToken({ identifier, token }) {
      const row = await db
        .deleteFrom('verification_tokens')
        .where('identifier', '=', identifier)
        .where('token', '=', token)
        .returningAll()
        .executeTakeFirst();
      return row ? { identifier: row.identifier, token: row.token, expires: row.expires_at } : null;
    },
  };
}
