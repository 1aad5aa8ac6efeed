import { testConfig } from './config';

export interface ApiAnswer<T = Record<string, unknown>> {
  status: number;
  body: T;
  headers: Headers;
}

/** Calls the running app's JSON API as a script would. */
export async function api<T = Record<string, unknown>>(
  method: string,
  path: string,
  options: { token?: string; body?: unknown; rawBody?: string; headers?: Record<string, string> } = {},
): Promise<ApiAnswer<T>> {
  const headers: Record<string, string> = { ...options.headers };
  if (options.token) headers.Authorization = `Bearer ${options.token}`;
  let body: string | undefined;
  if (options.rawBody !== undefined) body = options.rawBody;
  else if (options.body !== undefined) {
    body = JSON.stringify(options.body);
    headers['Content-Type'] ??= 'application/json';
  }
  const response = await fetch(`${testConfig().baseUrl}${path}`, { method, headers, body, redirect: 'manual' });
  const text = await response.text();
  let parsed: unknown = null;
  if (text) {
    try {
      parsed = JSON.parse(text);
    } catch {
      parsed = { nonJson: text.slice(0, 200) };
    }
  }
  return { status: response.status, body: parsed as T, headers: response.headers };
}
