import { beforeAll, describe, expect, it } from 'vitest';
import { ROLES, type Role } from '@/lib/permissions';
import { api } from '../support/api';
import { createAccount, type RoleFixture, testDb, tokenFor, workspaceWithEveryRole } from '../support/fixtures';

/**
 * Every workspace endpoint, called by every role, by a signed-in outsider and by nobody: allowed
 * roles succeed, other members get 403, outsiders 404 (the workspace stays invisible), anonymous 401.
 * Expectations follow the roles table of PRODUCT.md.
 */
type Caller = Role | 'outsider' | 'anonymous';
interface Attempt {
  method: string;
  path: string;
  body?: unknown;
}
interface EndpointCase {
  name: string;
  allowed: readonly Role[];
  success: number;
  /** Builds a fresh request per caller, so that a successful call never spoils the next one. */
  attempt: (f: RoleFixture, caller: Caller) => Promise<Attempt>;
}

const everyone = ROLES;
const ownerOnly: readonly Role[] = ['owner'];

async function extraMember(f: RoleFixture): Promise<string> {
  const account = await createAccount('extra');
  await testDb().insertInto('memberships').values({ workspace_id: f.workspaceId, user_id: account.id, role: 'viewer' }).execute();
  return account.id;
}

async function pendingInvitation(f: RoleFixture): Promise<string> {
  const answer = await api<{ id: string }>('POST', `/api/workspaces/${f.workspaceId}/invitations`, {
    token: f.members.owner.token,
    body: { email: `pending-${Math.random().toString(36).slice(2)}@example.test`, role: 'viewer' },
  });
  expect(answer.status).toBe(201);
  return answer.body.id;
}

const CASES: EndpointCase[] = [
  { name: 'GET workspace', allowed: everyone, success: 200, attempt: async (f) => ({ method: 'GET', path: `/api/workspaces/${f.workspaceId}` }) },
  {
    name: 'PATCH workspace (rename)',
    allowed: ownerOnly,
    success: 200,
    attempt: async (f) => ({ method: 'PATCH', path: `/api/workspaces/${f.workspaceId}`, body: { name: 'Role fixture' } }),
  },
  {
    name: 'DELETE workspace',
    allowed: ownerOnly,
    success: 204,
    attempt: async (f, caller) => {
      if (caller !== 'owner') return { method: 'DELETE', path: `/api/workspaces/${f.workspaceId}` };
      // The owner deletes a workspace of their own made for this call, keeping the fixture intact.
      const made = await api<{ id: string }>('POST', '/api/workspaces', { token: f.members.owner.token, body: { name: 'To delete' } });
      return { method: 'DELETE', path: `/api/workspaces/${made.body.id}` };
    },
  },
  { name: 'GET members', allowed: everyone, success: 200, attempt: async (f) => ({ method: 'GET', path: `/api/workspaces/${f.workspaceId}/members` }) },
  {
    name: 'POST members (add an existing account)',
    allowed: ownerOnly,
    success: 201,
    attempt: async (f) => {
      const account = await createAccount('added');
      return { method: 'POST', path: `/api/workspaces/${f.workspaceId}/members`, body: { email: account.email, role: 'reviewer' } };
    },
  },
  {
    name: 'PATCH member role',
    allowed: ownerOnly,
    success: 200,
    attempt: async (f) => ({
      method: 'PATCH',
      path: `/api/workspaces/${f.workspaceId}/members/${await extraMember(f)}`,
      body: { role: 'presenter' },
    }),
  },
  {
    name: 'DELETE member (someone else)',
    allowed: ownerOnly,
    success: 204,
    attempt: async (f) => ({ method: 'DELETE', path: `/api/workspaces/${f.workspaceId}/members/${await extraMember(f)}` }),
  },
  { name: 'GET invitations', allowed: ownerOnly, success: 200, attempt: async (f) => ({ method: 'GET', path: `/api/workspaces/${f.workspaceId}/invitations` }) },
  {
    name: 'POST invitation',
    allowed: ownerOnly,
    success: 201,
    attempt: async (f) => ({
      method: 'POST',
      path: `/api/workspaces/${f.workspaceId}/invitations`,
      body: { email: `invitee-${Math.random().toString(36).slice(2)}@example.test`, role: 'expert' },
    }),
  },
  {
    name: 'DELETE invitation (revoke)',
    allowed: ownerOnly,
    success: 204,
    attempt: async (f) => ({ method: 'DELETE', path: `/api/workspaces/${f.workspaceId}/invitations/${await pendingInvitation(f)}` }),
  },
];

const CALLERS: Caller[] = [...ROLES, 'outsider', 'anonymous'];

function tokenOf(f: RoleFixture, caller: Caller): string | undefined {
  if (caller === 'anonymous') return undefined;
  return caller === 'outsider' ? f.outsider.token : f.members[caller].token;
}

describe('permissions on every workspace endpoint', () => {
  let f: RoleFixture;
  beforeAll(async () => {
    f = await workspaceWithEveryRole();
  });

  for (const c of CASES) {
    describe(c.name, () => {
      for (const caller of CALLERS) {
        const expected =
          caller === 'anonymous' ? 401 : caller === 'outsider' ? 404 : c.allowed.includes(caller) ? c.success : 403;
        it(`${caller} → ${expected}`, async () => {
          const attempt = await c.attempt(f, caller);
          const answer = await api(attempt.method, attempt.path, { token: tokenOf(f, caller), body: attempt.body });
          expect(answer.status, JSON.stringify(answer.body)).toBe(expected);
          if (expected >= 400) {
            expect(answer.body).toMatchObject({ error: { code: expect.any(String), message: expect.any(String) } });
          }
        });
      }
    });
  }

  it('refused calls changed nothing: the fixture workspace and its six members are intact', async () => {
    const workspace = await testDb().selectFrom('workspaces').selectAll().where('id', '=', f.workspaceId).executeTakeFirst();
    expect(workspace?.name).toBe('Role fixture');
    const roles = await testDb()
      .selectFrom('memberships')
      .select(['user_id', 'role'])
      .where('workspace_id', '=', f.workspaceId)
      .where('user_id', 'in', ROLES.map((r) => f.members[r].id))
      .execute();
    expect(new Map(roles.map((r) => [r.user_id, r.role]))).toEqual(new Map(ROLES.map((r) => [f.members[r].id, r])));
  });

  it('GET /api/workspaces lists only the caller’s own workspaces, with their role', async () => {
    const mine = await api<{ items: { id: string; role: string }[] }>('GET', '/api/workspaces', { token: f.members.expert.token });
    expect(mine.status).toBe(200);
    expect(mine.body.items).toEqual([expect.objectContaining({ id: f.workspaceId, role: 'expert' })]);
    const theirs = await api<{ items: unknown[] }>('GET', '/api/workspaces', { token: f.outsider.token });
    expect(theirs.body.items).toEqual([]);
  });

  it('any member may leave (remove themselves); the last owner may not', async () => {
    const leaver = await createAccount('leaver');
    await testDb().insertInto('memberships').values({ workspace_id: f.workspaceId, user_id: leaver.id, role: 'viewer' }).execute();
    const left = await api('DELETE', `/api/workspaces/${f.workspaceId}/members/${leaver.id}`, { token: await tokenFor(leaver) });
    expect(left.status).toBe(204);
    const ownerLeaves = await api('DELETE', `/api/workspaces/${f.workspaceId}/members/${f.members.owner.id}`, {
      token: f.members.owner.token,
    });
    expect(ownerLeaves.status).toBe(409);
    expect(ownerLeaves.body).toMatchObject({ error: { code: 'last_owner' } });
  });

  it('the last owner cannot be demoted; with a second owner they can', async () => {
    const path = `/api/workspaces/${f.workspaceId}/members/${f.members.owner.id}`;
    const refused = await api('PATCH', path, { token: f.members.owner.token, body: { role: 'analyst' } });
    expect(refused.status).toBe(409);
    expect(refused.body).toMatchObject({ error: { code: 'last_owner' } });

    const second = await createAccount('second-owner');
    await testDb().insertInto('memberships').values({ workspace_id: f.workspaceId, user_id: second.id, role: 'owner' }).execute();
    const demoted = await api('PATCH', path, { token: f.members.owner.token, body: { role: 'analyst' } });
    expect(demoted.status).toBe(200);
    expect(demoted.body).toMatchObject({ role: 'analyst' });
    // Now an analyst: member management is refused.
    const after = await api('GET', `/api/workspaces/${f.workspaceId}/invitations`, { token: f.members.owner.token });
    expect(after.status).toBe(403);
    await testDb()
      .updateTable('memberships')
      .set({ role: 'owner' })
      .where('workspace_id', '=', f.workspaceId)
      .where('user_id', '=', f.members.owner.id)
      .execute();
  });
});
