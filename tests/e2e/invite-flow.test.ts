import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { testConfig } from '../support/config';
import { launchBrowser } from '../support/browser';
import { uniqueEmail } from '../support/fixtures';
import { linkIn, waitForMail } from '../support/mailbox';

type Browser = Awaited<ReturnType<typeof launchBrowser>>;


/** Browser flows on a loaded 2-core machine take 5–15 s, and tens of seconds at worst; 30 s has proved too tight in CI. */
const E2E_TIMEOUT_MS = 120_000;
describe('in Chromium', () => {
  let browser: Browser;
  const { appUrl, demoPassword } = testConfig();

  beforeAll(async () => {
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
  });

  it('the owner creates a workspace and invites an expert, who follows the mailed link and joins as expert', async () => {
    const owner = await (await browser.newContext()).newPage();
    await owner.goto(`${appUrl}/sign-in`);
    await owner.getByLabel('E-mail', { exact: true }).fill('owner@demo.test');
    await owner.getByLabel('Password').fill(demoPassword);
    await owner.getByRole('button', { name: 'Sign in' }).click();
    await owner.waitForURL(`${appUrl}/workspaces`);
    await expect(owner.getByRole('link', { name: /Larkspur Books/ }).isVisible()).resolves.toBe(true);

    const workspaceName = `Board figures ${Date.now()}`;
    await owner.getByLabel('New workspace name').fill(workspaceName);
    await owner.getByRole('button', { name: 'Create workspace' }).click();
    await owner.waitForURL(/\/workspaces\/[0-9a-f-]{36}$/);
    const workspaceUrl = owner.url();
    expect(await owner.getByTestId('workspace-name').textContent()).toBe(workspaceName);
    expect(await owner.getByTestId('workspace-role').textContent()).toBe('owner');

    await owner.getByRole('link', { name: 'Members' }).click();
    await owner.waitForURL(`${workspaceUrl}/members`);
    const expertEmail = uniqueEmail('regional-lead');
    await owner.getByLabel('E-mail').fill(expertEmail);
    await owner.getByLabel('Role', { exact: true }).selectOption('expert');
    await owner.getByRole('button', { name: 'Send invitation' }).click();
    await owner.getByText(`Invitation sent to ${expertEmail}`).waitFor();
    await owner.getByText(expertEmail).first().waitFor();

    const mail = await waitForMail(expertEmail, new RegExp(workspaceName));
    const link = linkIn(mail, `${appUrl}/invitations/`);

    const expert = await (await browser.newContext()).newPage();
    await expert.goto(link);
    await expert.getByRole('heading', { name: 'Workspace invitation' }).waitFor();
    expect(await expert.locator('main').textContent()).toContain(`${workspaceName} as expert`);
    await expert.getByRole('link', { name: 'Create an account to join' }).click();
    await expert.waitForURL(/\/sign-up\?invitation=/);
    expect(await expert.getByLabel('E-mail').inputValue()).toBe(expertEmail);
    await expert.getByLabel('Your name').fill('Tove Larch');
    await expert.getByLabel('Password').fill('holiday coast 2027');
    await expert.getByRole('button', { name: 'Create account and join' }).click();
    await expert.waitForURL(workspaceUrl);
    expect(await expert.getByTestId('workspace-name').textContent()).toBe(workspaceName);
    expect(await expert.getByTestId('workspace-role').textContent()).toBe('expert');

    // The owner's member list shows the new expert.
    await owner.reload();
    const row = owner.getByTestId(`member-${expertEmail}`);
    await row.waitFor();
    expect(await row.getByRole('combobox').inputValue()).toBe('expert');
  }, E2E_TIMEOUT_MS);

  it('a magic link mailed to a demo account signs it in', async () => {
    const page = await (await browser.newContext()).newPage();
    await page.goto(`${appUrl}/sign-in`);
    await page.getByLabel('E-mail for a sign-in link').fill('viewer@demo.test');
    const sentAfter = new Date().toISOString();
    await page.getByRole('button', { name: 'E-mail me a link' }).click();
    await page.waitForURL(`${appUrl}/sign-in/check-email`);
    const mail = await waitForMail('viewer@demo.test', /sign-in link/);
    expect(mail.receivedAt >= sentAfter).toBe(true);
    await page.goto(linkIn(mail, `${appUrl}/api/auth/callback/nodemailer`));
    await page.waitForURL(`${appUrl}/workspaces`);
    expect(await page.getByTestId('signed-in-as').textContent()).toContain('Ola Brisk');
    await page.getByRole('link', { name: /Larkspur Books/ }).click();
    expect(await page.getByTestId('workspace-role').textContent()).toBe('viewer');
  }, E2E_TIMEOUT_MS);

  it('a wrong password is refused with a message, and signing out ends the session', async () => {
    const page = await (await browser.newContext()).newPage();
    await page.goto(`${appUrl}/sign-in`);
    await page.getByLabel('E-mail', { exact: true }).fill('reviewer@demo.test');
    await page.getByLabel('Password').fill('not the password');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.getByRole('alert').filter({ hasText: 'E-mail or password is wrong.' }).waitFor();

    await page.getByLabel('Password').fill(demoPassword);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(`${appUrl}/workspaces`);
    const cookies = await page.context().cookies();
    const session = cookies.find((c) => c.name === 'asterism.session');
    expect(session).toMatchObject({ httpOnly: true, sameSite: 'Lax' });

    await page.getByRole('button', { name: 'Sign out' }).click();
    await page.waitForURL(`${appUrl}/sign-in`);
    await page.goto(`${appUrl}/workspaces`);
    await page.waitForURL(/\/sign-in/);
  }, E2E_TIMEOUT_MS);
});
