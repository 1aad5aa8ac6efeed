import { randomUUID } from 'node:crypto';
import { beforeAll, describe, expect, it } from 'vitest';
import { api } from '../support/api';
import { createAccount, testDb, tokenFor } from '../support/fixtures';

/** Bad input gets a clear 4xx JSON error and changes nothing. */
describe('bad input', () => {
  let token: string;
  let workspaceId: string;

  const snapshot = async () => {
    const db = testDb();
    const count = async (table: 'workspaces' | 'memberships' | 'invitations' | 'access_tokens' | 'users') =>
      Number((await db.selectFrom(table).select((eb) => eb.fn.countAll<number>().as('n')).executeTakeFirstOrThrow()).n);
    const workspace = await db.selectFrom('workspaces').select(['name', 'updated_at']).where('id', '=', workspaceId).executeTakeFirstOrThrow();
    return {
      workspaces: await count('workspaces'),
      memberships: await count('memberships'),
      invitations: await count('invitations'),
      tokens: await count('access_tokens'),
      users: await count('users'),
      workspace,
    };
  };

  beforeAll(async () => {
    const owner = await createAccount('bad-input-owner');
    token = await tokenFor(owner);
    const created = await api<{ id: string }>('POST', '/api/workspaces', { token, body: { name: 'Unchanged' } });
    workspaceId = created.body.id;
  });

  const cases: { name: string; status: number; code: string; request: () => Promise<{ method: string; path: string; rawBody?: string; body?: unknown; headers?: Record<string, string> }> }[] = [
    {
      name: 'malformed JSON',
      status: 400,
      code: 'invalid_json',
      request: async () => ({ method: 'POST', path: '/api/workspaces', rawBody: '{"name": "half', headers: { 'Content-Type': 'application/json' } }),
    },
    {
      name: 'a body that is not JSON at all',
      status: 415,
      code: 'unsupported_media_type',
      request: async () => ({ method: 'POST', path: '/api/workspaces', rawBody: 'name=x', headers: { 'Content-Type': 'application/x-www-form-urlencoded' } }),
    },
    {
      name: 'unknown fields',
      status: 400,
      code: 'invalid_input',
      request: async () => ({ method: 'PATCH', path: `/api/workspaces/${workspaceId}`, body: { name: 'Renamed', colour: 'red' } }),
    },
    {
      name: 'an invalid e-mail in an invitation',
      status: 400,
      code: 'invalid_input',
      request: async () => ({ method: 'POST', path: `/api/workspaces/${workspaceId}/invitations`, body: { email: 'tove@', role: 'expert' } }),
    },
    {
      name: 'an unknown role',
      status: 400,
      code: 'invalid_input',
      request: async () => ({ method: 'POST', path: `/api/workspaces/${workspaceId}/invitations`, body: { email: 'ok@example.test', role: 'admin' } }),
    },
    {
      name: 'an over-long workspace name (81 characters)',
      status: 400,
      code: 'invalid_input',
      request: async () => ({ method: 'PATCH', path: `/api/workspaces/${workspaceId}`, body: { name: 'x'.repeat(81) } }),
    },
    {
      name: 'an empty workspace name',
      status: 400,
      code: 'invalid_input',
      request: async () => ({ method: 'POST', path: '/api/workspaces', body: { name: '   ' } }),
    },
    {
      name: 'a JSON array instead of an object',
      status: 400,
      code: 'invalid_input',
      request: async () => ({ method: 'POST', path: '/api/workspaces', body: ['Larkspur'] }),
    },
    {
      name: 'a missing workspace',
      status: 404,
      code: 'not_found',
      request: async () => ({ method: 'PATCH', path: `/api/workspaces/${randomUUID()}`, body: { name: 'Ghost' } }),
    },
    {
      name: 'a workspace id that is not a UUID',
      status: 404,
      code: 'not_found',
      request: async () => ({ method: 'GET', path: '/api/workspaces/not-a-uuid/members' }),
    },
    {
      name: 'a member that does not exist',
      status: 404,
      code: 'not_found',
      request: async () => ({ method: 'PATCH', path: `/api/workspaces/${workspaceId}/members/${randomUUID()}`, body: { role: 'viewer' } }),
    },
    {
      name: 'adding an address without an account',
      status: 404,
      code: 'not_found',
      request: async () => ({ method: 'POST', path: `/api/workspaces/${workspaceId}/members`, body: { email: 'nobody-here@example.test', role: 'viewer' } }),
    },
    {
      name: 'a token request without a name',
      status: 400,
      code: 'invalid_input',
      request: async () => ({ method: 'POST', path: '/api/tokens', body: { email: 'owner@demo.test', password: 'asterism-demo' } }),
    },
    {
      name: 'a body over 64 KiB',
      status: 413,
      code: 'body_too_large',
      request: async () => ({ method: 'POST', path: '/api/workspaces', body: { name: 'x'.repeat(70_000) } }),
    },
  ];

  for (const c of cases) {
    it(`${c.name} → ${c.status} ${c.code}, nothing stored`, async () => {
      const before = await snapshot();
      const request = await c.request();
      const { method, path, ...rest } = request;
      const answer = await api<{ error: { code: string; message: string } }>(method, path, { token, ...rest });
      expect(answer.status, JSON.stringify(answer.body)).toBe(c.status);
      expect(answer.headers.get('content-type')).toMatch(/application\/json/);
      expect(answer.body.error.code).toBe(c.code);
      expect(answer.body.error.message.length).toBeGreaterThan(5);
      expect(await snapshot()).toEqual(before);
    });
  }

  it('names the offending field and the unknown key in the message', async () => {
    const unknown = await api<{ error: { message: string; details: { path: string; message: string }[] } }>(
      'PATCH',
      `/api/workspaces/${workspaceId}`,
      { token, body: { name: 'Renamed', colour: 'red' } },
    );
    expect(unknown.body.error.message).toContain('colour');
    const long = await api<{ error: { details: { path: string; message: string }[] } }>('PATCH', `/api/workspaces/${workspaceId}`, {
      token,
      body: { name: 'x'.repeat(81) },
    });
    expect(long.body.error.details).toEqual([{ path: 'name', message: 'A workspace name has at most 80 characters' }]);
  });
});
