/** Calls the JSON API from the browser; a refusal becomes an Error carrying the API's own message. */
export async function jsonFetch<T>(url: string, init?: RequestInit): Promise<T> {
  const response = await fetch(url, { ...init, headers: { 'Content-Type': 'application/json', ...init?.headers } });
  if (response.status === 204) return undefined as T;
  const body: unknown = await response.json();
  if (!response.ok) throw new Error((body as { error?: { message?: string } }).error?.message ?? `Request failed (${response.status})`);
  return body as T;
}
