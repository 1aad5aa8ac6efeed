import { describe, expect, it } from 'vitest';
import { DEMO_ACCOUNTS } from '@/db/seed';
import { api } from '../support/api';
import { testConfig } from '../support/config';
import { createAccount, testDb, tokenFor } from '../support/fixtures';

describe('health', () => {
  it('GET /api/health reports the database', async () => {
    const answer = await api('GET', '/api/health');
    expect(answer.status).toBe(200);
    expect(answer.body).toEqual({ ok: true, db: true });
  });
});

describe('personal access tokens', () => {
  it('every demo account signs in with the demo password', async () => {
    for (const account of DEMO_ACCOUNTS) {
      const answer = await api('POST', '/api/tokens', {
        body: { email: account.email, password: testConfig().demoPassword, name: 'demo check' },
      });
      expect(answer.status, account.email).toBe(201);
    }
  });

  it('POST /api/tokens answers 201 with the token once and stores only its hash', async () => {
    const account = await createAccount('tokens');
    const answer = await api<{ token: string; id: string; name: string }>('POST', '/api/tokens', {
      body: { email: account.email.toUpperCase(), password: account.password, name: 'R on laptop' },
    });
    expect(answer.status).toBe(201);
    expect(answer.body).toMatchObject({ id: expect.any(String), name: 'R on laptop', token: expect.stringMatching(/^ast_/) });
    const row = await testDb().selectFrom('access_tokens').selectAll().where('id', '=', answer.body.id).executeTakeFirstOrThrow();
    expect(row.token_hash).not.toContain(answer.body.token);
    expect(row.token_hash).toMatch(/^[0-9a-f]{64}$/);

    const me = await api('GET', '/api/me', { token: answer.body.token });
    expect(me.status).toBe(200);
    expect(me.body).toMatchObject({ id: account.id, email: account.email, authenticatedBy: 'token' });

    const list = await api<{ items: { id: string; name: string }[] }>('GET', '/api/tokens', { token: answer.body.token });
    expect(list.body.items.map((t) => t.id)).toContain(answer.body.id);
    expect(JSON.stringify(list.body)).not.toContain(answer.body.token);
  });

  it('a wrong password gets 401 and no token', async () => {
    const account = await createAccount('wrong-password');
    const answer = await api('POST', '/api/tokens', { body: { email: account.email, password: 'nope', name: 'x' } });
    expect(answer.status).toBe(401);
    expect(answer.body).toMatchObject({ error: { code: 'invalid_credentials' } });
    const count = await testDb().selectFrom('access_tokens').select((eb) => eb.fn.countAll<number>().as('n')).where('user_id', '=', account.id).executeTakeFirstOrThrow();
    expect(Number(count.n)).toBe(0);
  });

  it('an unknown account gets the same 401 as a wrong password', async () => {
    const answer = await api('POST', '/api/tokens', { body: { email: 'nobody@example.test', password: 'nope', name: 'x' } });
    expect(answer.status).toBe(401);
    expect(answer.body).toMatchObject({ error: { code: 'invalid_credentials' } });
  });

  it('a revoked token is refused with 401', async () => {
    const account = await createAccount('revoke');
    const token = await tokenFor(account);
    const { body } = await api<{ id: string }>('GET', '/api/me', { token });
    expect(body.id).toBe(account.id);
    const list = await api<{ items: { id: string }[] }>('GET', '/api/tokens', { token });
    const id = list.body.items[0]?.id;
    const revoked = await api('DELETE', `/api/tokens/${id}`, { token });
    expect(revoked.status).toBe(204);
    const after = await api('GET', '/api/me', { token });
    expect(after.status).toBe(401);
    expect(after.body).toMatchObject({ error: { code: 'unauthorized' } });
    expect((await api('GET', '/api/workspaces', { token })).status).toBe(401);
  });

  it('nobody can revoke someone else’s token', async () => {
    const alice = await createAccount('alice');
    const bob = await createAccount('bob');
    const aliceToken = await tokenFor(alice);
    const bobToken = await tokenFor(bob);
    const bobs = await api<{ items: { id: string }[] }>('GET', '/api/tokens', { token: bobToken });
    const answer = await api('DELETE', `/api/tokens/${bobs.body.items[0]?.id}`, { token: aliceToken });
    expect(answer.status).toBe(404);
    expect((await api('GET', '/api/me', { token: bobToken })).status).toBe(200);
  });

  it('a malformed or unknown bearer token is 401, never a fall-back to the cookie', async () => {
    expect((await api('GET', '/api/me', { headers: { Authorization: 'Basic abc' } })).status).toBe(401);
    expect((await api('GET', '/api/me', { token: 'ast_not-a-real-token' })).status).toBe(401);
    expect((await api('GET', '/api/me')).status).toBe(401);
  });

  it('after 5 failed attempts the account is locked, even for the right password (429)', async () => {
    const account = await createAccount('locked');
    for (let i = 0; i < 5; i += 1) {
      const answer = await api('POST', '/api/tokens', { body: { email: account.email, password: 'wrong', name: 'x' } });
      expect(answer.status).toBe(401);
    }
    const locked = await api('POST', '/api/tokens', { body: { email: account.email, password: account.password, name: 'x' } });
    expect(locked.status).toBe(429);
    expect(locked.body).toMatchObject({ error: { code: 'rate_limited' } });
    // Other accounts are unaffected.
    const other = await createAccount('not-locked');
    expect((await api('POST', '/api/tokens', { body: { email: other.email, password: other.password, name: 'x' } })).status).toBe(201);
  });
});
