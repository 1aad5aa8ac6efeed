import { type ChildProcess, spawn } from 'node:child_process';
import type { TestProject } from 'vitest/node';
import { testConfig } from './config';

/**
 * Starts what the integration and browser tests talk to: the local SMTP sink and the built app
 * (`next start`) on the test port, against the test database that scripts/test.sh created.
 */
function start(name: string, command: string, args: string[]): ChildProcess {
  // Own process group, so that stopping it also stops what npx started underneath.
  const child = spawn(command, args, { stdio: ['ignore', 'pipe', 'pipe'], env: process.env, detached: true });
  const prefix = (chunk: Buffer) => chunk.toString().replace(/^(?=.)/gm, `[${name}] `);
  child.stdout?.on('data', (chunk: Buffer) => {
    if (process.env.TEST_VERBOSE) process.stdout.write(prefix(chunk));
  });
  child.stderr?.on('data', (chunk: Buffer) => process.stderr.write(prefix(chunk)));
  return child;
}

async function waitFor(url: string, timeoutMs: number): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  let lastError: unknown;
  while (Date.now() < deadline) {
    try {
      const response = await fetch(url);
      if (response.ok) return;
      lastError = new Error(`status ${response.status}`);
    } catch (error) {
      lastError = error;
    }
    await new Promise((r) => setTimeout(r, 250));
  }
  throw new Error(`${url} did not answer within ${timeoutMs} ms: ${String(lastError)}`);
}

declare module 'vitest' {
  export interface ProvidedContext {
    /** Process group of the test worker (scripts/worker.ts), for the test that pauses it. */
    workerProcessGroup: number;
  }
}

export default async function setup(project: TestProject): Promise<() => Promise<void>> {
  // Unit tests alone need no server: `ASTERISM_TEST_SERVER=0 npx vitest run tests/unit`.
  if (process.env.ASTERISM_TEST_SERVER === '0') return async () => {};
  const { port, baseUrl } = testConfig();
  // A server left over from another run would answer for ours, against another database.
  const stale = await fetch(`${baseUrl}/api/health`).then(() => true, () => false);
  if (stale) throw new Error(`port ${port} is already in use: stop whatever listens there, or set TEST_PORT`);
  const sink = start('mail-sink', 'npx', ['tsx', 'scripts/mail-sink.ts']);
  const app = start('app', 'npx', ['next', 'start', '-H', '127.0.0.1', '-p', String(port)]);
  const worker = start('worker', 'npx', ['tsx', '--conditions=react-server', 'scripts/worker.ts']);
  await waitFor(`${baseUrl}/api/health`, 60_000);
  if (worker.pid !== undefined) project.provide('workerProcessGroup', worker.pid);
  return async () => {
    // A test that paused the worker may have failed before resuming it.
    if (worker.pid !== undefined && worker.exitCode === null) process.kill(-worker.pid, 'SIGCONT');
    for (const child of [app, sink, worker]) {
      if (child.pid !== undefined && child.exitCode === null) process.kill(-child.pid, 'SIGTERM');
    }
    await Promise.all(
      [app, sink, worker].map((child) => new Promise<void>((resolve) => (child.exitCode !== null ? resolve() : child.once('exit', () => resolve())))),
    );
  };
}
