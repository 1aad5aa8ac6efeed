import { describe, expect, it } from 'vitest';
import { checkPasswordSignIn } from '@/lib/auth/password-sign-in';
import { signInBlocked } from '@/lib/auth/rate-limit';
import { createAccount, testDb } from '../support/fixtures';

const LIMITS = { maxPerAccount: 5, maxPerAddress: 20, windowMinutes: 15 };

describe('failed sign-in limits (against PostgreSQL)', () => {
  it('locks a client address after 20 failures spread over many accounts', async () => {
    const address = `198.51.100.${Math.floor(Math.random() * 250)}`;
    for (let i = 0; i < 20; i += 1) {
      const result = await checkPasswordSignIn(testDb(), { email: `spray-${i}@example.test`, password: 'guess', address }, LIMITS);
      expect(result).toEqual({ ok: false, reason: 'invalid' });
    }
    const victim = await createAccount('victim');
    const blocked = await checkPasswordSignIn(testDb(), { email: victim.email, password: victim.password, address }, LIMITS);
    expect(blocked).toEqual({ ok: false, reason: 'rate_limited' });
    // The same person from another address still gets in.
    const elsewhere = await checkPasswordSignIn(testDb(), { email: victim.email, password: victim.password, address: '203.0.113.9' }, LIMITS);
    expect(elsewhere.ok).toBe(true);
  });

  it('forgets failures older than the window', async () => {
    const account = await createAccount('old-failures');
    await testDb()
      .insertInto('sign_in_failures')
      .values(Array.from({ length: 5 }, () => ({ email: account.email, address: '192.0.2.1', created_at: new Date(Date.now() - 16 * 60_000) })))
      .execute();
    expect(await signInBlocked(testDb(), account.email, '192.0.2.1', LIMITS)).toBe(false);
  });

  it('a successful sign-in clears the account’s failures', async () => {
    const account = await createAccount('clears');
    for (let i = 0; i < 4; i += 1) {
      await checkPasswordSignIn(testDb(), { email: account.email, password: 'wrong', address: '192.0.2.2' }, LIMITS);
    }
    expect((await checkPasswordSignIn(testDb(), { email: account.email, password: account.password, address: '192.0.2.2' }, LIMITS)).ok).toBe(true);
    const left = await testDb().selectFrom('sign_in_failures').select('id').where('email', '=', account.email).execute();
    expect(left).toHaveLength(0);
  });
});
