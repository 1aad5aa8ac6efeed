/**
 * Import benchmark (a script, not a timed test): generates 100,000 × 64 and 1,000,000 × 16 CSV files,
 * uploads each through the API of a running app (`npm start`), and prints MB/s and the server's peak
 * memory against the file size. Goal (issue): ≥ 50 MB/s, peak memory < 3 × file size.
 *
 *   npm run bench:import            # against http://127.0.0.1:3000 as owner@demo.test
 *   BENCH_URL=… BENCH_EMAIL=… BENCH_PASSWORD=… npm run bench:import
 */
import { createReadStream, promises as fs } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Readable } from 'node:stream';

const url = process.env.BENCH_URL ?? 'http://127.0.0.1:3000';
const email = process.env.BENCH_EMAIL ?? 'owner@demo.test';
const password = process.env.BENCH_PASSWORD ?? process.env.DEMO_PASSWORD ?? 'asterism-demo';
const cases = [
  { rows: 100_000, dims: 64 },
  { rows: 1_000_000, dims: 16 },
];

async function post<T>(route: string, init: RequestInit): Promise<T> {
  const response = await fetch(`${url}${route}`, init);
  const body = (await response.json()) as T;
  if (!response.ok) throw new Error(`${route}: ${response.status} ${JSON.stringify(body)}`);
  return body;
}

async function writeCsv(file: string, rows: number, dims: number): Promise<number> {
  const handle = await fs.open(file, 'w');
  let state = 12_345;
  let chunk: string[] = [`id,${Array.from({ length: dims }, (_, k) => `f${k + 1}`).join(',')}`];
  for (let i = 0; i < rows; i += 1) {
    const cells = [`e${i}`];
    for (let k = 0; k < dims; k += 1) {
      state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
      cells.push(Math.fround((state / 2 ** 32 - 0.5) * 6).toPrecision(7));
    }
    chunk.push(cells.join(','));
    if (chunk.length >= 10_000) {
      await handle.write(`${chunk.join('\n')}\n`);
      chunk = [];
    }
  }
  if (chunk.length) await handle.write(`${chunk.join('\n')}\n`);
  await handle.close();
  return (await fs.stat(file)).size;
}

/** The app's server process, to read its resident memory from /proc. */
async function serverPid(): Promise<number | null> {
  for (const entry of await fs.readdir('/proc')) {
    if (!/^\d+$/.test(entry)) continue;
    try {
      const cmdline = await fs.readFile(`/proc/${entry}/cmdline`, 'utf8');
      if (cmdline.startsWith('next-server')) return Number(entry);
    } catch {
      // The process ended while we looked.
    }
  }
  return null;
}

async function residentKiB(pid: number): Promise<{ rss: number; peak: number }> {
  const status = await fs.readFile(`/proc/${pid}/status`, 'utf8');
  const field = (name: string) => Number(new RegExp(`${name}:\\s+(\\d+)`).exec(status)?.[1] ?? 0);
  return { rss: field('VmRSS'), peak: field('VmHWM') };
}

async function main(): Promise<void> {
  const { token } = await post<{ token: string }>('/api/tokens', {
    method: 'POST',
    headers: { 'Content-Type': 'application/json' },
    body: JSON.stringify({ email, password, name: 'bench:import' }),
  });
  const auth = { Authorization: `Bearer ${token}` };
  const workspace = await post<{ id: string }>('/api/workspaces', {
    method: 'POST',
    headers: { ...auth, 'Content-Type': 'application/json' },
    body: JSON.stringify({ name: `Import benchmark ${new Date().toISOString()}` }),
  });
  const pid = await serverPid();
  const dir = await fs.mkdtemp(path.join(tmpdir(), 'asterism-bench-'));
  console.log(`bench:import against ${url} (server pid ${pid ?? 'not found: memory not measured'})`);
  try {
    for (const { rows, dims } of cases) {
      const file = path.join(dir, `bench-${rows}x${dims}.csv`);
      const bytes = await writeCsv(file, rows, dims);
      if (pid) {
        // Resets the kernel's peak-RSS mark (Linux ≥ 4.0), so VmHWM covers this import only.
        await fs.writeFile(`/proc/${pid}/clear_refs`, '5').catch((error: unknown) => console.warn('could not reset peak RSS:', error));
      }
      const before = pid ? await residentKiB(pid) : null;
      const boundary = `----asterism-bench-${Date.now()}`;
      const head = Buffer.from(
        `--${boundary}\r\nContent-Disposition: form-data; name="name"\r\n\r\nbench ${rows}x${dims}\r\n` +
          `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="${path.basename(file)}"\r\nContent-Type: text/csv\r\n\r\n`,
      );
      const tail = Buffer.from(`\r\n--${boundary}--\r\n`);
      async function* body() {
        yield head;
        for await (const chunk of createReadStream(file, { highWaterMark: 1 << 20 })) yield chunk as Buffer;
        yield tail;
      }
      const started = performance.now();
      const response = await fetch(`${url}/api/workspaces/${workspace.id}/factor-sets`, {
        method: 'POST',
        headers: { ...auth, 'Content-Type': `multipart/form-data; boundary=${boundary}`, 'Content-Length': String(head.length + bytes + tail.length) },
        body: Readable.toWeb(Readable.from(body())) as ReadableStream<Uint8Array>,
        duplex: 'half',
      } as RequestInit);
      const answer = (await response.json()) as { id?: string; rows?: number; error?: unknown };
      const seconds = (performance.now() - started) / 1000;
      if (response.status !== 201) throw new Error(`import failed: ${response.status} ${JSON.stringify(answer)}`);
      const after = pid ? await residentKiB(pid) : null;
      const mb = bytes / 1e6;
      const peakMb = after ? (after.peak * 1024) / 1e6 : Number.NaN;
      console.log(
        [
          `${rows.toLocaleString('en-GB')} × ${dims}:`,
          `${mb.toFixed(1)} MB in ${seconds.toFixed(1)} s = ${(mb / seconds).toFixed(1)} MB/s`,
          after && before
            ? `server peak RSS ${peakMb.toFixed(0)} MB (${(peakMb / mb).toFixed(2)} × file; before ${((before.rss * 1024) / 1e6).toFixed(0)} MB)`
            : 'server memory not measured',
        ].join('  '),
      );
      await fs.rm(file);
    }
  } finally {
    await fs.rm(dir, { recursive: true, force: true });
  }
}

main().catch((error: unknown) => {
  console.error('bench:import failed:', error);
  process.exitCode = 1;
});
