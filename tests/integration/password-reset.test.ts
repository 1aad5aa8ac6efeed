import { describe, expect, it } from 'vitest';
import { requestPasswordReset, resetPassword } from '@/lib/auth/accounts';
import { ApiError } from '@/lib/api/errors';
import { api } from '../support/api';
import { testConfig } from '../support/config';
import { createAccount, testDb, tokenFor, uniqueEmail } from '../support/fixtures';
import { linkIn, mailCount, waitForMail } from '../support/mailbox';

const NEW_PASSWORD = 'a brand new passphrase';

describe('password reset by e-mail', () => {
  it('mails a one-time link that sets a new password and ends older sessions', async () => {
    const account = await createAccount('forgetful');
    const oldToken = await tokenFor(account);
    const before = await testDb().selectFrom('users').select('session_version').where('id', '=', account.id).executeTakeFirstOrThrow();
    await requestPasswordReset(testDb(), account.email);
    const mail = await waitForMail(account.email, /Reset your Asterism password/);
    const link = linkIn(mail, `${testConfig().appUrl}/reset-password/`);
    const token = link.split('/').pop() ?? '';

    await resetPassword(testDb(), token, NEW_PASSWORD);
    const after = await testDb().selectFrom('users').select('session_version').where('id', '=', account.id).executeTakeFirstOrThrow();
    expect(after.session_version).toBe(before.session_version + 1);

    const oldPassword = await api('POST', '/api/tokens', { body: { email: account.email, password: account.password, name: 'x' } });
    expect(oldPassword.status).toBe(401);
    const newPassword = await api('POST', '/api/tokens', { body: { email: account.email, password: NEW_PASSWORD, name: 'x' } });
    expect(newPassword.status).toBe(201);
    // Tokens made with the old password are revoked with it.
    expect((await api('GET', '/api/me', { token: oldToken })).status).toBe(401);

    await expect(resetPassword(testDb(), token, 'yet another passphrase')).rejects.toMatchObject({ code: 'reset_link_invalid' });
  });

  it('refuses an expired link', async () => {
    const account = await createAccount('slow');
    await requestPasswordReset(testDb(), account.email);
    const token = linkIn(await waitForMail(account.email), `${testConfig().appUrl}/reset-password/`).split('/').pop() ?? '';
    await testDb().updateTable('password_resets').set({ expires_at: new Date(Date.now() - 1000) }).where('user_id', '=', account.id).execute();
    const attempt = resetPassword(testDb(), token, NEW_PASSWORD);
    await expect(attempt).rejects.toBeInstanceOf(ApiError);
  });

  it('sends nothing for an address without an account', async () => {
    const email = uniqueEmail('ghost');
    await requestPasswordReset(testDb(), email);
    await new Promise((r) => setTimeout(r, 300));
    expect(await mailCount(email)).toBe(0);
  });
});
