import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';

export const root = path.resolve(import.meta.dirname, '../../..');

/**
 * Whether lib/projection/<name>.wasm is what `npm run build:wasm` makes of
 * lib/projection/assembly/<name>.ts now (compiled afresh into a temporary folder).
 */
export function committedWasmMatchesSource(name: string): boolean {
  const folder = mkdtempSync(path.join(tmpdir(), 'asterism-wasm-'));
  try {
    const out = path.join(folder, `${name}.wasm`);
    execFileSync(path.join(root, 'node_modules/.bin/asc'), [`lib/projection/assembly/${name}.ts`, '--config', 'lib/projection/assembly/asconfig.json', '-o', out], { cwd: root, stdio: 'pipe' });
    return readFileSync(out).equals(readFileSync(path.join(root, `lib/projection/${name}.wasm`)));
  } finally {
    rmSync(folder, { recursive: true, force: true });
  }
}
