import { describe, expect, it } from 'vitest';
import { api } from '../support/api';
import { testConfig } from '../support/config';
import { createAccount, testDb, tokenFor, uniqueEmail } from '../support/fixtures';
import { linkIn, mailCount, waitForMail } from '../support/mailbox';

async function ownerWithWorkspace(name: string) {
  const owner = await createAccount('inviting-owner');
  const token = await tokenFor(owner);
  const created = await api<{ id: string }>('POST', '/api/workspaces', { token, body: { name } });
  expect(created.status).toBe(201);
  return { owner, token, workspaceId: created.body.id };
}

function tokenFromLink(link: string): string {
  const match = /\/invitations\/([A-Za-z0-9_-]+)$/.exec(link);
  if (!match?.[1]) throw new Error(`not an invitation link: ${link}`);
  return match[1];
}

describe('invitations', () => {
  it('mails an accept link that adds the member with the invited role', async () => {
    const { token, workspaceId } = await ownerWithWorkspace('Campus towns');
    const invitee = await createAccount('invitee');
    const invited = await api<{ id: string; email: string; role: string; expiresAt: string }>(
      'POST',
      `/api/workspaces/${workspaceId}/invitations`,
      { token, body: { email: invitee.email, role: 'expert' } },
    );
    expect(invited.status).toBe(201);
    expect(invited.body).toMatchObject({ email: invitee.email, role: 'expert' });
    const days = (new Date(invited.body.expiresAt).getTime() - Date.now()) / 86_400_000;
    expect(days).toBeGreaterThan(6.99);
    expect(days).toBeLessThanOrEqual(7);

    const mail = await waitForMail(invitee.email, /Campus towns/);
    const link = linkIn(mail, `${testConfig().appUrl}/invitations/`);
    const secret = tokenFromLink(link);
    expect(mail.text).toContain('as expert');

    const pending = await api<{ items: { id: string }[] }>('GET', `/api/workspaces/${workspaceId}/invitations`, { token });
    expect(pending.body.items.map((i) => i.id)).toContain(invited.body.id);

    const inviteeToken = await tokenFor(invitee);
    const accepted = await api('POST', `/api/invitations/${secret}/accept`, { token: inviteeToken });
    expect(accepted.status).toBe(200);
    expect(accepted.body).toEqual({ workspaceId, role: 'expert' });
    const seen = await api('GET', `/api/workspaces/${workspaceId}`, { token: inviteeToken });
    expect(seen.status).toBe(200);
    expect(seen.body).toMatchObject({ role: 'expert' });

    const again = await api('POST', `/api/invitations/${secret}/accept`, { token: inviteeToken });
    expect(again.status).toBe(409);
    expect(again.body).toMatchObject({ error: { code: 'invitation_used' } });
    const afterAccept = await api<{ items: unknown[] }>('GET', `/api/workspaces/${workspaceId}/invitations`, { token });
    expect(afterAccept.body.items).toHaveLength(0);
  });

  it('refuses a link used by an account with another address', async () => {
    const { token, workspaceId } = await ownerWithWorkspace('Commuter stations');
    const email = uniqueEmail('intended');
    await api('POST', `/api/workspaces/${workspaceId}/invitations`, { token, body: { email, role: 'viewer' } });
    const secret = tokenFromLink(linkIn(await waitForMail(email), `${testConfig().appUrl}/invitations/`));
    const stranger = await createAccount('stranger');
    const answer = await api('POST', `/api/invitations/${secret}/accept`, { token: await tokenFor(stranger) });
    expect(answer.status).toBe(409);
    expect(answer.body).toMatchObject({ error: { code: 'invitation_other_address' } });
    const member = await testDb().selectFrom('memberships').select('user_id').where('workspace_id', '=', workspaceId).where('user_id', '=', stranger.id).executeTakeFirst();
    expect(member).toBeUndefined();
  });

  it('refuses an expired link (older than 7 days)', async () => {
    const { token, workspaceId } = await ownerWithWorkspace('Holiday coast');
    const invitee = await createAccount('late');
    const invited = await api<{ id: string }>('POST', `/api/workspaces/${workspaceId}/invitations`, {
      token,
      body: { email: invitee.email, role: 'reviewer' },
    });
    const secret = tokenFromLink(linkIn(await waitForMail(invitee.email), `${testConfig().appUrl}/invitations/`));
    await testDb()
      .updateTable('invitations')
      .set({ expires_at: new Date(Date.now() - 1000) })
      .where('id', '=', invited.body.id)
      .execute();
    const answer = await api('POST', `/api/invitations/${secret}/accept`, { token: await tokenFor(invitee) });
    expect(answer.status).toBe(409);
    expect(answer.body).toMatchObject({ error: { code: 'invitation_expired' } });
  });

  it('a revoked invitation cannot be accepted', async () => {
    const { token, workspaceId } = await ownerWithWorkspace('Revocations');
    const invitee = await createAccount('revoked-invitee');
    const invited = await api<{ id: string }>('POST', `/api/workspaces/${workspaceId}/invitations`, {
      token,
      body: { email: invitee.email, role: 'viewer' },
    });
    const secret = tokenFromLink(linkIn(await waitForMail(invitee.email), `${testConfig().appUrl}/invitations/`));
    expect((await api('DELETE', `/api/workspaces/${workspaceId}/invitations/${invited.body.id}`, { token })).status).toBe(204);
    const answer = await api('POST', `/api/invitations/${secret}/accept`, { token: await tokenFor(invitee) });
    expect(answer.status).toBe(409);
    expect(answer.body).toMatchObject({ error: { code: 'invitation_invalid' } });
  });

  it('does not invite someone who is already a member, and sends nothing', async () => {
    const { owner, token, workspaceId } = await ownerWithWorkspace('Members already');
    const before = await mailCount(owner.email);
    const answer = await api('POST', `/api/workspaces/${workspaceId}/invitations`, { token, body: { email: owner.email, role: 'viewer' } });
    expect(answer.status).toBe(409);
    expect(answer.body).toMatchObject({ error: { code: 'already_member' } });
    expect(await mailCount(owner.email)).toBe(before);
  });

  it('stores only a hash of the link’s secret', async () => {
    const { token, workspaceId } = await ownerWithWorkspace('Hashes');
    const email = uniqueEmail('hashed');
    await api('POST', `/api/workspaces/${workspaceId}/invitations`, { token, body: { email, role: 'viewer' } });
    const secret = tokenFromLink(linkIn(await waitForMail(email), `${testConfig().appUrl}/invitations/`));
    const row = await testDb().selectFrom('invitations').select('token_hash').where('email', '=', email).executeTakeFirstOrThrow();
    expect(row.token_hash).not.toBe(secret);
    expect(row.token_hash).toMatch(/^[0-9a-f]{64}$/);
  });
});
