/**
 * Map benchmark (a script, not a timed test). Against a running app (`npm start`), it imports
 * seeded 2-D Gaussian mixtures of 100,000 and 1,000,000 entities through the API (once; later runs
 * reuse them), projects each with PCA, opens each map in headless Chromium and prints:
 *   - bytes on the wire for coordinates (goal ≤ 8 per point), fidelity and entity columns;
 *   - time from navigation to the data being in the page, and to the first frame drawn with it
 *     ("data on the GPU");
 *   - frame time while panning (a drag of 20 steps, frames counted by the canvas);
 *   - JS heap used.
 * Without a GPU Chromium renders WebGL in software (SwiftShader, or llvmpipe with --llvmpipe), so
 * frame times here measure the CPU rasteriser, not the map; pass --gpu on a machine with one.
 *
 *   npm run bench:map [-- --only=100000] [--gpu | --llvmpipe]
 *   BENCH_URL=… BENCH_EMAIL=… BENCH_PASSWORD=… npm run bench:map
 */
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { chromium } from 'playwright-core';

const url = process.env.BENCH_URL ?? 'http://127.0.0.1:3000';
const email = process.env.BENCH_EMAIL ?? 'owner@demo.test';
const password = process.env.BENCH_PASSWORD ?? process.env.DEMO_PASSWORD ?? 'asterism-demo';
const args = new Set(process.argv.slice(2));
const only = [...args].find((a) => a.startsWith('--only='))?.slice(7);
const sizes = [100_000, 1_000_000].filter((n) => !only || String(n) === only);
const renderer = args.has('--gpu') ? 'gpu' : args.has('--llvmpipe') ? 'llvmpipe' : 'swiftshader';
const WORKSPACE_NAME = 'Map benchmark';

async function call<T>(route: string, init: RequestInit = {}, token?: string): Promise<T> {
  const response = await fetch(`${url}${route}`, { ...init, headers: { ...(token ? { Authorization: `Bearer ${token}` } : {}), ...init.headers } });
  const text = await response.text();
  if (!response.ok) throw new Error(`${route}: ${response.status} ${text.slice(0, 300)}`);
  return (text ? JSON.parse(text) : null) as T;
}

/** A seeded mixture of eight Gaussian blobs in 2-D, written as CSV (id, two factors, a category). */
function mixtureCsv(n: number): string {
  let state = 20_261_201;
  const uniform = () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return (state + 0.5) / 2 ** 32;
  };
  const normal = () => Math.sqrt(-2 * Math.log(uniform())) * Math.cos(2 * Math.PI * uniform());
  const lines = ['id,f1,f2,group'];
  for (let i = 0; i < n; i += 1) {
    const g = i % 8;
    const angle = (g / 8) * 2 * Math.PI;
    lines.push(`e${i},${(Math.cos(angle) * 6 + normal()).toFixed(4)},${(Math.sin(angle) * 6 + normal()).toFixed(4)},g${g}`);
  }
  return `${lines.join('\n')}\n`;
}

async function ensureProjection(token: string, workspaceId: string, n: number): Promise<string> {
  const name = `Mixture ${n.toLocaleString('en-GB')} × 2`;
  const sets = await call<{ items: { id: string; name: string }[] }>(`/api/workspaces/${workspaceId}/factor-sets`, {}, token);
  let factorSetId = sets.items.find((s) => s.name === name)?.id;
  if (!factorSetId) {
    const started = performance.now();
    const form = new FormData();
    form.append('name', name);
    form.append('file', new Blob([Buffer.from(mixtureCsv(n), 'utf8')]), `mixture-${n}.csv`);
    const created = await call<{ id: string }>(`/api/workspaces/${workspaceId}/factor-sets`, { method: 'POST', body: form }, token);
    factorSetId = created.id;
    console.log(`  imported ${name} in ${((performance.now() - started) / 1000).toFixed(1)} s`);
  }
  const queued = await call<{ id: string }>(`/api/factor-sets/${factorSetId}/projections`, {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ method: 'pca', params: {}, seed: 1 }),
  }, token);
  for (;;) {
    const p = await call<{ status: string; error: string | null; phase: string | null }>(`/api/projections/${queued.id}`, {}, token);
    if (p.status === 'done') return queued.id;
    if (p.status === 'failed' || p.status === 'cancelled') throw new Error(`projection ${p.status}: ${p.error}`);
    await new Promise((r) => setTimeout(r, 500));
  }
}

function flags(): string[] {
  const base = ['--no-sandbox', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'];
  if (renderer === 'gpu') return [...base, '--ignore-gpu-blocklist', '--enable-gpu-rasterization'];
  if (renderer === 'llvmpipe') return [...base, '--use-angle=gl-egl', '--ignore-gpu-blocklist'];
  return [...base, '--disable-gpu', '--use-angle=swiftshader', '--enable-unsafe-swiftshader'];
}

async function main(): Promise<void> {
  const { token } = await call<{ token: string }>('/api/tokens', {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ email, password, name: 'bench:map' }),
  });
  const workspaces = await call<{ items: { id: string; name: string }[] }>('/api/workspaces', {}, token);
  const workspaceId =
    workspaces.items.find((w) => w.name === WORKSPACE_NAME)?.id ??
    (await call<{ id: string }>('/api/workspaces', { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ name: WORKSPACE_NAME }) }, token)).id;
  console.log(`bench:map against ${url}, renderer ${renderer}`);

  const dir = await mkdtemp(path.join(tmpdir(), 'asterism-bench-map-'));
  const context = await chromium.launchPersistentContext(dir, { executablePath: '/usr/bin/chromium', headless: true, args: flags(), viewport: { width: 1400, height: 1000 } });
  try {
    const page = await context.newPage();
    await page.goto(`${url}/sign-in`);
    await page.getByLabel('E-mail', { exact: true }).fill(email);
    await page.getByLabel('Password').fill(password);
    await page.getByRole('button', { name: 'Sign in' }).click();
    await page.waitForURL(`${url}/workspaces`);
    const rendererName = await page.evaluate(() => {
      const gl = document.createElement('canvas').getContext('webgl2');
      const info = gl?.getExtension('WEBGL_debug_renderer_info');
      return gl && info ? String(gl.getParameter(info.UNMASKED_RENDERER_WEBGL)) : 'no WebGL2';
    });
    console.log(`  WebGL renderer: ${rendererName}`);

    const rows: string[] = [];
    for (const n of sizes) {
      const projectionId = await ensureProjection(token, workspaceId, n);
      const cdp = await context.newCDPSession(page);
      await cdp.send('Network.enable');
      const urls = new Map<string, string>();
      const bytes = { coords: 0, fidelity: 0, entities: 0, total: 0 };
      // When the coordinates and the entity columns had fully arrived (wall clock).
      const arrived = { coords: 0, entities: 0 };
      cdp.on('Network.requestWillBeSent', (e) => urls.set(e.requestId, e.request.url));
      cdp.on('Network.loadingFinished', (e) => {
        const u = urls.get(e.requestId) ?? '';
        bytes.total += e.encodedDataLength;
        if (u.includes('/coords')) {
          bytes.coords += e.encodedDataLength;
          arrived.coords = Date.now();
        }
        else if (u.includes('/fidelity')) bytes.fidelity += e.encodedDataLength;
        else if (u.includes('/entities/columns')) {
          bytes.entities += e.encodedDataLength;
          arrived.entities = Date.now();
        }
      });
      const started = Date.now();
      await page.goto(`${url}/workspaces/${workspaceId}/projections/${projectionId}`, { timeout: 300_000 });
      await page.locator('[data-testid="map-workspace"][data-ready="true"]').waitFor({ timeout: 600_000 });
      // Software WebGL blocks the page while it draws, so "ready" can lag the network: time the bytes.
      const dataAt = Math.max(arrived.coords, arrived.entities) - started;
      const coordsAt = arrived.coords - started;
      await page.waitForFunction(() => Number(document.querySelector('[data-testid="map-canvas-main"]')?.getAttribute('data-frames') ?? 0) >= 1, null, { timeout: 600_000, polling: 50 });
      // The canvas mounts only once the coordinates are in, so its first frame is the points drawn.
      const drawnAt = Date.now() - started;

      const box = await page.getByTestId('map-canvas-main').boundingBox();
      let frameMs = Number.NaN;
      if (box) {
        const before = await page.evaluate(() => Number(document.querySelector('[data-testid="map-canvas-main"]')?.getAttribute('data-frames') ?? 0));
        const panStart = Date.now();
        await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
        await page.mouse.down();
        // Software rendering takes seconds a frame; a few steps are enough to time one.
        const steps = renderer === 'gpu' ? 20 : 3;
        for (let s = 1; s <= steps; s += 1) await page.mouse.move(box.x + box.width / 2 + s * 8, box.y + box.height / 2 + s * 4);
        await page.mouse.up();
        await page.waitForTimeout(200);
        const after = await page.evaluate(() => Number(document.querySelector('[data-testid="map-canvas-main"]')?.getAttribute('data-frames') ?? 0));
        frameMs = (Date.now() - panStart) / Math.max(1, after - before);
      }
      const heap = (await cdp.send('Runtime.getHeapUsage')) as { usedSize: number; totalSize: number };
      await cdp.detach();
      const mb = (b: number) => (b / 1e6).toFixed(1);
      rows.push(
        `| ${n.toLocaleString('en-GB')} | ${(bytes.coords / n).toFixed(2)} | ${mb(bytes.fidelity)} | ${mb(bytes.entities)} | ${mb(bytes.total)} | ${(dataAt / 1000).toFixed(1)} | ${((drawnAt - coordsAt) / 1000).toFixed(2)} | ${frameMs.toFixed(0)} | ${mb(heap.usedSize)} |`,
      );
      console.log(rows[rows.length - 1]);
    }
    console.log('\n| points | coords bytes/point | fidelity MB | entity columns MB | all MB | s to data in page | s coords in → first frame | ms per frame panning | JS heap MB |');
    console.log('|---|---|---|---|---|---|---|---|---|');
    for (const row of rows) console.log(row);
    if (renderer !== 'gpu') console.log(`(frame times are ${renderer}'s software rasteriser, not a GPU)`);
  } finally {
    await context.close();
    await rm(dir, { recursive: true, force: true });
  }
}

main().catch((error: unknown) => {
  console.error(error);
  process.exit(1);
});
