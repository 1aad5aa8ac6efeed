import { z } from 'zod';
import { ApiError } from './errors';
import { describeIssues } from './route';

/** What a server action answers a form with; on success most actions redirect instead. */
export type ActionResult<T = null> =
  | { ok: true; data: T }
  | { ok: false; error: string; fieldErrors?: Record<string, string> };

/** Validates with the input's schema (the one its form uses) and turns known failures into messages. */
export async function runAction<S extends z.ZodType, T>(
  schema: S,
  input: unknown,
  fn: (data: z.output<S>) => Promise<T>,
): Promise<ActionResult<T>> {
  const parsed = schema.safeParse(input);
  if (!parsed.success) {
    const { message, details } = describeIssues(parsed.error);
    return { ok: false, error: message, fieldErrors: Object.fromEntries(details.map((d) => [d.path, d.message])) };
  }
  try {
    return { ok: true, data: await fn(parsed.data) };
  } catch (error) {
    // Only our own refusals become messages; redirects and real failures propagate.
    if (error instanceof ApiError) return { ok: false, error: error.message };
    throw error;
  }
}

/** Only same-site paths may be redirected to after sign-in. */
export function safeReturnPath(value: unknown, fallback = '/workspaces'): string {
  return typeof value === 'string' && value.startsWith('/') && !value.startsWith('//') && !value.startsWith('/\\')
    ? value
    : fallback;
}
