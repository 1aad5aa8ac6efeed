import { randomUUID } from 'node:crypto';
import type { Kysely } from 'kysely';
import { afterAll } from 'vitest';
import { createDb } from '@/db/connection';
import type { Database } from '@/db/types';
import { hashPassword } from '@/lib/auth/secrets';
import { ROLES, type Role } from '@/lib/permissions';
import { api } from './api';
import { testConfig } from './config';

let shared: Kysely<Database> | undefined;

/** A direct connection to the test database, for arranging state and checking what was stored. */
export function testDb(): Kysely<Database> {
  if (!shared) {
    shared = createDb(testConfig().databaseUrl, 3);
    afterAll(async () => {
      await shared?.destroy();
      shared = undefined;
    });
  }
  return shared;
}

export const TEST_PASSWORD = 'correct horse battery staple';

export function uniqueEmail(label: string): string {
  return `${label}-${randomUUID().slice(0, 8)}@example.test`;
}

export interface Account {
  id: string;
  email: string;
  password: string;
}

export async function createAccount(label: string, password = TEST_PASSWORD): Promise<Account> {
  const email = uniqueEmail(label);
  const row = await testDb()
    .insertInto('users')
    .values({ email, name: label, password_hash: await hashPassword(password) })
    .returning('id')
    .executeTakeFirstOrThrow();
  return { id: row.id, email, password };
}

export async function tokenFor(account: Pick<Account, 'email' | 'password'>): Promise<string> {
  const answer = await api<{ token: string }>('POST', '/api/tokens', {
    body: { email: account.email, password: account.password, name: 'test' },
  });
  if (answer.status !== 201) throw new Error(`token for ${account.email}: ${answer.status} ${JSON.stringify(answer.body)}`);
  return answer.body.token;
}

export interface RoleFixture {
  workspaceId: string;
  /** One member per role, each with a token. */
  members: Record<Role, Account & { token: string }>;
  /** Signed in, but not a member of this workspace. */
  outsider: Account & { token: string };
}

/** A workspace whose owner created it through the API, with one member per role added directly. */
export async function workspaceWithEveryRole(name = 'Role fixture'): Promise<RoleFixture> {
  const entries = await Promise.all(
    ROLES.map(async (role) => {
      const account = await createAccount(role);
      return [role, { ...account, token: await tokenFor(account) }] as const;
    }),
  );
  const members = Object.fromEntries(entries) as RoleFixture['members'];
  const created = await api<{ id: string }>('POST', '/api/workspaces', { token: members.owner.token, body: { name } });
  if (created.status !== 201) throw new Error(`workspace: ${created.status}`);
  const workspaceId = created.body.id;
  await testDb()
    .insertInto('memberships')
    .values(ROLES.filter((r) => r !== 'owner').map((role) => ({ workspace_id: workspaceId, user_id: members[role].id, role })))
    .execute();
  const outsiderAccount = await createAccount('outsider');
  return { workspaceId, members, outsider: { ...outsiderAccount, token: await tokenFor(outsiderAccount) } };
}
