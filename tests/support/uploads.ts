import { testConfig } from './config';

export interface UploadPart {
  content: string | Uint8Array;
  filename: string;
}

/** Posts a multipart upload the way curl -F or R's httr would. */
export async function upload<T = Record<string, unknown>>(
  path: string,
  token: string | undefined,
  parts: { file?: UploadPart; labels?: UploadPart; fields?: Record<string, string> },
): Promise<{ status: number; body: T }> {
  const form = new FormData();
  for (const [key, value] of Object.entries(parts.fields ?? {})) form.append(key, value);
  for (const key of ['file', 'labels'] as const) {
    const part = parts[key];
    if (part) form.append(key, new Blob([typeof part.content === 'string' ? part.content : Buffer.from(part.content)]), part.filename);
  }
  const response = await fetch(`${testConfig().baseUrl}${path}`, {
    method: 'POST',
    headers: token ? { Authorization: `Bearer ${token}` } : {},
    body: form,
  });
  const text = await response.text();
  return { status: response.status, body: (text ? JSON.parse(text) : null) as T };
}

/** A wide CSV with an id column and K factor columns, values written so they read back as the same float32. */
export function wideCsv(ids: string[], values: Float32Array, k: number, extra?: { header: string; cells: string[] }): string {
  const header = ['id', ...Array.from({ length: k }, (_, c) => `f${c + 1}`), ...(extra ? [extra.header] : [])].join(',');
  const lines = ids.map((id, i) => {
    const row = [id];
    for (let c = 0; c < k; c += 1) row.push(String(values[i * k + c]));
    if (extra) row.push(extra.cells[i] ?? '');
    return row.join(',');
  });
  return `${header}\n${lines.join('\n')}\n`;
}

/** Deterministic float32 test values (a fixed linear congruential sequence; no seed to manage). */
export function float32Sequence(length: number, seed = 1): Float32Array {
  const out = new Float32Array(length);
  let state = seed >>> 0;
  for (let i = 0; i < length; i += 1) {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    out[i] = (state / 2 ** 32 - 0.5) * 8;
  }
  return out;
}
