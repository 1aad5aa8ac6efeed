import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { launchBrowser } from '../support/browser';
import { testConfig } from '../support/config';
import { float32Sequence, wideCsv } from '../support/uploads';


/** Browser flows on a loaded 2-core machine take 5–15 s, and tens of seconds at worst; 30 s has proved too tight in CI. */
const E2E_TIMEOUT_MS = 120_000;
describe('importing in Chromium', () => {
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let dir: string;
  const { appUrl, demoPassword } = testConfig();

  beforeAll(async () => {
    browser = await launchBrowser();
    dir = await mkdtemp(path.join(tmpdir(), 'asterism-e2e-'));
  });
  afterAll(async () => {
    await browser?.close();
    await rm(dir, { recursive: true, force: true });
  });

  it('the analyst uploads a CSV, sees the progress and the report, confirms, and finds the factor set', async () => {
    const n = 2500;
    const ids = Array.from({ length: n }, (_, i) => `shop-${String(i + 1).padStart(4, '0')}`);
    const regions = ids.map((_, i) => (i % 2 ? 'north' : 'south'));
    const file = path.join(dir, 'autumn-refit.csv');
    await writeFile(file, wideCsv(ids, float32Sequence(n * 6, 42), 6, { header: 'region', cells: regions }));

    const page = await (await browser.newContext()).newPage();
    await page.goto(`${appUrl}/sign-in`);
    await page.getByLabel('E-mail', { exact: true }).fill('analyst@demo.test');
    await page.getByLabel('Password').fill(demoPassword);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(`${appUrl}/workspaces`);
    await page.getByRole('link', { name: /Larkspur Books/ }).click();
    await page.getByRole('link', { name: 'Import a factor set' }).click();
    await page.waitForURL(/\/import$/);

    await page.getByLabel('Factor file', { exact: true }).setInputFiles(file);
    expect(await page.getByTestId('chosen-file').textContent()).toContain('autumn-refit.csv');
    await page.getByLabel('Name').fill('Autumn refit');
    // The progress line shows only while the upload is busy, which can be shorter than one
    // locator round trip: record every text it shows from the start, and check them afterwards.
    await page.evaluate(() => {
      const seen: string[] = [];
      (window as unknown as { progressTexts: string[] }).progressTexts = seen;
      const record = () => {
        const text = document.querySelector('[data-testid="upload-progress"]')?.textContent;
        if (text && seen.at(-1) !== text) seen.push(text);
      };
      new MutationObserver(record).observe(document.body, { childList: true, subtree: true, characterData: true });
    });
    await page.getByRole('button', { name: 'Upload and check' }).click();

    const report = page.getByTestId('parse-report');
    await report.waitFor();
    const progressTexts = await page.evaluate(() => (window as unknown as { progressTexts: string[] }).progressTexts);
    expect(progressTexts.length).toBeGreaterThan(0);
    expect(progressTexts[0]).toMatch(/^Sent [0-9.]+ (B|KiB|MiB)(; reading the file| of [0-9.]+ (B|KiB|MiB))/);
    expect(await page.getByTestId('report-format').textContent()).toBe('delimited-wide');
    expect(await page.getByTestId('report-shape').textContent()).toBe('2500 × 6');
    expect(await report.textContent()).toContain('region');
    expect(await report.textContent()).toContain('shop-0001');

    await page.getByRole('button', { name: 'Store this factor set' }).click();
    await page.waitForURL(/\/factor-sets\/[0-9a-f-]{36}$/);
    expect(await page.getByTestId('factor-set-name').textContent()).toBe('Autumn refit');
    expect(await page.getByTestId('factor-set-shape').textContent()).toBe('2500 × 6');
    const table = page.getByTestId('entities-table');
    await table.getByText('shop-0001').waitFor();

    await page.getByLabel('Search by id or label').fill('shop-2499');
    await table.getByText('shop-2499').waitFor();
    await page.waitForFunction(() => document.querySelectorAll('[data-testid="entities-table"] tbody tr').length === 1);

    await page.getByRole('link', { name: 'Factor sets' }).click();
    await page.getByTestId('factor-sets-table').getByRole('link', { name: 'Autumn refit' }).waitFor();
  }, E2E_TIMEOUT_MS);
});
