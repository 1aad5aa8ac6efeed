import { createRequire } from 'node:module';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { toScreen } from '@/components/map/camera';
import { api } from '../support/api';
import { launchBrowser } from '../support/browser';
import { testConfig } from '../support/config';
import { type RoleFixture, workspaceWithEveryRole } from '../support/fixtures';
import { upload } from '../support/uploads';

/**
 * The map in Chromium with WebGL in software (SwiftShader). The factor set is a 20 × 10 grid in two
 * dimensions with unequal spacing, so its PCA projection is the grid itself up to a sign per axis:
 * every point's place on screen is known from the coordinates endpoint and the camera.
 */
const COLUMNS = 20;
const ROWS = 10;
const n = COLUMNS * ROWS;
const idOf = (c: number, r: number) => `cell-${c}-${r}`;

interface CameraState {
  target: [number, number];
  zoom: number;
  width: number;
  height: number;
}

async function camera(page: Page, name = 'main'): Promise<CameraState> {
  const raw = await page.getByTestId(`map-canvas-${name}`).getAttribute('data-camera');
  return JSON.parse(raw ?? '{}') as CameraState;
}

async function framesDrawn(page: Page, name = 'main'): Promise<number> {
  return Number((await page.getByTestId(`map-canvas-${name}`).getAttribute('data-frames')) ?? 0);
}

/** Waits until the canvas has a size, data and a frame drawn after the camera settled. */
async function settled(page: Page): Promise<void> {
  await page.getByTestId('map-workspace').and(page.locator('[data-ready="true"]')).waitFor({ timeout: 60_000 });
  await page.waitForFunction(() => Number(document.querySelector('[data-testid="map-canvas-main"]')?.getAttribute('data-frames') ?? 0) > 1, null, { timeout: 60_000 });
  const before = await framesDrawn(page);
  await page.waitForTimeout(400);
  // A frame more after the last state change (software rendering takes tens of milliseconds here).
  await page.waitForFunction((b) => Number(document.querySelector('[data-testid="map-canvas-main"]')?.getAttribute('data-frames') ?? 0) >= b, before, { timeout: 30_000 });
}

/** RGBA of the WebGL canvas at CSS pixel (x, y), read back through a 2-D canvas. */
async function pixels(page: Page, points: [number, number][]): Promise<number[][]> {
  return page.evaluate((spots) => {
    const gl = document.querySelector('[data-testid="map-canvas-main"] canvas') as HTMLCanvasElement | null;
    if (!gl) throw new Error('no canvas');
    const copy = document.createElement('canvas');
    copy.width = gl.width;
    copy.height = gl.height;
    const context = copy.getContext('2d');
    if (!context) throw new Error('no 2d context');
    context.drawImage(gl, 0, 0);
    const ratio = gl.width / gl.getBoundingClientRect().width;
    return spots.map(([x, y]) => Array.from(context.getImageData(Math.round(x * ratio), Math.round(y * ratio), 1, 1).data));
  }, points);
}

async function signIn(page: Page, email: string, password: string): Promise<void> {
  const { appUrl } = testConfig();
  await page.goto(`${appUrl}/sign-in`);
  await page.getByLabel('E-mail', { exact: true }).fill(email);
  await page.getByLabel('Password').fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.waitForURL(`${appUrl}/workspaces`);
}

describe('the map in Chromium (WebGL in software)', () => {
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let f: RoleFixture;
  let projectionId: string;
  let coords: Float32Array;
  const { appUrl } = testConfig();

  beforeAll(async () => {
    browser = await launchBrowser({ webgl: true });
    f = await workspaceWithEveryRole('Map fixture');
    const lines = ['id,label,f1,f2,band'];
    for (let c = 0; c < COLUMNS; c += 1) for (let r = 0; r < ROWS; r += 1) lines.push(`${idOf(c, r)},Cell ${c}/${r},${c * 1.0},${r * 0.7},${r < 5 ? 'low' : 'high'}`);
    const created = await upload<{ id: string }>(`/api/workspaces/${f.workspaceId}/factor-sets`, f.members.analyst.token, {
      file: { content: `${lines.join('\n')}\n`, filename: 'grid.csv' },
    });
    expect(created.status, JSON.stringify(created.body)).toBe(201);
    const queued = await api<{ id: string }>('POST', `/api/factor-sets/${created.body.id}/projections`, { token: f.members.analyst.token, body: { method: 'pca', params: {}, seed: 1 } });
    projectionId = queued.body.id;
    for (let tries = 0; ; tries += 1) {
      const p = await api<{ status: string; error: string | null }>('GET', `/api/projections/${projectionId}`, { token: f.members.analyst.token });
      if (p.body.status === 'done') break;
      if (p.body.status === 'failed' || tries > 240) throw new Error(`projection ${p.body.status}: ${p.body.error}`);
      await new Promise((r) => setTimeout(r, 250));
    }
    const response = await fetch(`${testConfig().baseUrl}/api/projections/${projectionId}/coords`, { headers: { Authorization: `Bearer ${f.members.analyst.token}` } });
    coords = new Float32Array(await response.arrayBuffer());
    expect(coords.length).toBe(n * 2);
  });
  afterAll(async () => {
    await browser?.close();
  });

  const mapUrl = () => `${appUrl}/workspaces/${f.workspaceId}/projections/${projectionId}`;
  const screenOf = (cam: CameraState, index: number) => toScreen(cam, cam, coords[2 * index] as number, coords[2 * index + 1] as number);
  const indexOf = (c: number, r: number) => c * ROWS + r;

  it('draws the grid where it should, shows the hovered label, and a lasso selects exactly the enclosed points', async () => {
    const page = await (await browser.newContext()).newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await signIn(page, f.members.expert.email, f.members.expert.password);
    await page.goto(mapUrl());
    await settled(page);

    const cam = await camera(page);
    expect(cam.width).toBeGreaterThan(300);
    const samples = [indexOf(0, 0), indexOf(19, 9), indexOf(7, 3), indexOf(12, 8)];
    const drawn = await pixels(page, samples.map((i) => screenOf(cam, i)));
    for (const [k, rgba] of drawn.entries()) expect(rgba[3], `point ${samples[k]} drawn`).toBeGreaterThan(100);
    // Midway between four grid points there is nothing but the paper behind the canvas.
    const a = screenOf(cam, indexOf(7, 3));
    const b = screenOf(cam, indexOf(8, 4));
    const [gap] = await pixels(page, [[(a[0] + b[0]) / 2, (a[1] + b[1]) / 2]]);
    expect(gap?.[3]).toBe(0);

    const canvasBox = await page.getByTestId('map-canvas-main').boundingBox();
    if (!canvasBox) throw new Error('no canvas box');
    const target = screenOf(cam, indexOf(12, 8));
    await page.mouse.move(canvasBox.x + target[0], canvasBox.y + target[1]);
    await expect.poll(async () => page.getByTestId('map-tooltip-label').textContent(), { timeout: 10_000 }).toBe('Cell 12/8');

    // A lasso around columns 3–6 and rows 2–4: 4 × 3 = 12 points, drawn as a many-sided ring.
    await page.getByRole('button', { name: 'Lasso' }).click();
    const corner = (c: number, r: number) => {
      const s = screenOf(cam, indexOf(c, r));
      return [canvasBox.x + s[0], canvasBox.y + s[1]] as const;
    };
    const [x0, y0] = corner(3, 2);
    const [x1, y1] = corner(6, 4);
    const cx = (x0 + x1) / 2;
    const cy = (y0 + y1) / 2;
    const rx = Math.abs(x1 - x0) / 2 + Math.abs(corner(4, 2)[0] - x0) * 0.45;
    const ry = Math.abs(y1 - y0) / 2 + Math.abs(corner(3, 3)[1] - y0) * 0.45;
    // A superellipse hugs the rectangle of points without reaching the next row or column.
    const ring = Array.from({ length: 48 }, (_, k) => {
      const t = (k / 48) * 2 * Math.PI;
      const cos = Math.cos(t);
      const sin = Math.sin(t);
      return [cx + rx * Math.sign(cos) * Math.abs(cos) ** 0.2, cy + ry * Math.sign(sin) * Math.abs(sin) ** 0.2] as const;
    });
    await page.mouse.move(ring[0]?.[0] ?? 0, ring[0]?.[1] ?? 0);
    await page.mouse.down();
    for (const [x, y] of [...ring, ring[0] ?? [0, 0]]) await page.mouse.move(x, y, { steps: 2 });
    await page.mouse.up();
    await expect.poll(async () => page.getByTestId('selection-count').textContent(), { timeout: 10_000 }).toBe('12');
    const listed = await page.locator('section[aria-labelledby="selection-title"] tbody tr').count();
    expect(listed).toBe(12);
    expect(errors).toEqual([]);
  }, 120_000);

  it('an expert names the selection; it survives a reload and reaches a colleague’s open map within 5 s; a viewer can only look', async () => {
    const colleague = await (await browser.newContext()).newPage();
    await signIn(colleague, f.members.owner.email, f.members.owner.password);
    await colleague.goto(mapUrl());
    await settled(colleague);

    const page = await (await browser.newContext()).newPage();
    await signIn(page, f.members.expert.email, f.members.expert.password);
    // Selection through the URL: the view carries the ids, as a pasted link would.
    await page.goto(mapUrl());
    await settled(page);
    await page.getByRole('button', { name: 'Box' }).click();
    const cam = await camera(page);
    const box = await page.getByTestId('map-canvas-main').boundingBox();
    if (!box) throw new Error('no canvas box');
    const p = (c: number, r: number) => screenOf(cam, indexOf(c, r));
    const start = p(14, 6);
    const end = p(17, 9);
    const pad = Math.abs(p(15, 6)[0] - start[0]) / 2;
    const left = Math.min(start[0], end[0]) - pad;
    const right = Math.max(start[0], end[0]) + pad;
    const top = Math.min(start[1], end[1]) - pad;
    const bottom = Math.max(start[1], end[1]) + pad;
    await page.mouse.move(box.x + left, box.y + top);
    await page.mouse.down();
    await page.mouse.move(box.x + right, box.y + bottom, { steps: 8 });
    await page.mouse.up();
    await expect.poll(async () => page.getByTestId('selection-count').textContent(), { timeout: 10_000 }).toBe('16');

    await page.getByRole('button', { name: /New annotation from 16 selected/ }).click();
    await page.getByRole('form', { name: 'Create annotation' }).getByLabel('Name').fill('Upper corner');
    await page.getByRole('form', { name: 'Create annotation' }).getByLabel('Description').fill('Rows 6–9 of columns 14–17');
    const createdAt = Date.now();
    await page.getByRole('button', { name: 'Create annotation' }).click();
    await expect.poll(async () => page.getByTestId('annotation-name').allTextContents(), { timeout: 10_000 }).toContain('Upper corner');

    await colleague.getByTestId('annotation-name').filter({ hasText: 'Upper corner' }).waitFor({ timeout: 5_000 });
    const seenAfter = Date.now() - createdAt;
    expect(seenAfter).toBeLessThan(5_000);
    console.info(`the colleague's map showed the new annotation ${seenAfter} ms after the click`);
    expect(await colleague.getByTestId('annotation-count').first().textContent()).toBe('16');

    await page.reload();
    await settled(page);
    await expect.poll(async () => page.getByTestId('annotation-name').allTextContents(), { timeout: 10_000 }).toContain('Upper corner');
    await page.getByRole('button', { name: 'History' }).first().click();
    await expect.poll(async () => page.getByTestId('annotation-history').textContent(), { timeout: 10_000 }).toMatch(/v1 created by/);

    const viewer = await (await browser.newContext()).newPage();
    await signIn(viewer, f.members.viewer.email, f.members.viewer.password);
    await viewer.goto(mapUrl());
    await settled(viewer);
    await viewer.getByTestId('annotation-name').filter({ hasText: 'Upper corner' }).waitFor({ timeout: 10_000 });
    expect(await viewer.getByRole('button', { name: /New annotation/ }).count()).toBe(0);
    expect(await viewer.getByRole('button', { name: 'Edit' }).count()).toBe(0);
    expect(await viewer.getByRole('button', { name: 'Delete' }).count()).toBe(0);
    const refused = await viewer.evaluate(async (factorSetPath) => {
      const list = (await (await fetch(`${factorSetPath}?members=none`)).json()) as { items: { id: string; version: number }[] };
      const first = list.items[0];
      const patch = await fetch(`/api/annotations/${first?.id}`, { method: 'PATCH', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ version: first?.version, name: 'viewer was here' }) });
      return patch.status;
    }, await annotationsPath(f, projectionId));
    expect(refused).toBe(403);
  }, 180_000);

  it('has no serious or critical accessibility violations (axe)', async () => {
    const page = await (await browser.newContext()).newPage();
    await signIn(page, f.members.expert.email, f.members.expert.password);
    await page.goto(mapUrl());
    await settled(page);
    const require = createRequire(import.meta.url);
    await page.addScriptTag({ path: require.resolve('axe-core/axe.min.js') });
    const violations = await page.evaluate(async () => {
      const axe = (window as unknown as { axe: { run: (context: Document, options: object) => Promise<{ violations: { id: string; impact: string | null; nodes: { target: string[] }[] }[] }> } }).axe;
      const result = await axe.run(document, { resultTypes: ['violations'] });
      return result.violations.map((v) => ({ id: v.id, impact: v.impact, targets: v.nodes.slice(0, 3).map((node) => node.target.join(' ')) }));
    });
    const serious = violations.filter((v) => v.impact === 'serious' || v.impact === 'critical');
    expect(serious, JSON.stringify(serious, null, 1)).toEqual([]);
  }, 120_000);
});

async function annotationsPath(f: RoleFixture, projectionId: string): Promise<string> {
  const projection = await api<{ factorSetId: string }>('GET', `/api/projections/${projectionId}`, { token: f.members.owner.token });
  return `/api/factor-sets/${projection.body.factorSetId}/annotations`;
}
