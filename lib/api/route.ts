import 'server-only';
import { z } from 'zod';
import { ImportError } from '@/lib/import/types';
import { ApiError } from './errors';

export function json(data: unknown, init?: number | ResponseInit): Response {
  const responseInit = typeof init === 'number' ? { status: init } : init;
  return Response.json(data, {
    ...responseInit,
    headers: { 'Cache-Control': 'no-store', ...(responseInit?.headers ?? {}) },
  });
}

export function errorResponse(status: number, code: string, message: string, details?: unknown): Response {
  return json({ error: details === undefined ? { code, message } : { code, message, details } }, status);
}

/** Bad input in an uploaded file: 422 with the file, the first place, the first 20 places and the count. */
export function importErrorResponse(error: ImportError): Response {
  const first = error.places[0];
  return json(
    {
      error: {
        code: error.code,
        message: error.message,
        file: error.file,
        line: first?.line ?? null,
        column: first?.column ?? null,
        places: error.places,
        count: error.count,
      },
    },
    422,
  );
}

/** Wraps a route handler so that every failure becomes `{"error":{"code","message"}}` with its status. */
export function apiRoute<Ctx>(handler: (request: Request, ctx: Ctx) => Promise<Response>) {
  return async (request: Request, ctx: Ctx): Promise<Response> => {
    try {
      return await handler(request, ctx);
    } catch (error) {
      if (error instanceof ApiError) return errorResponse(error.status, error.code, error.message, error.details);
      if (error instanceof ImportError) return importErrorResponse(error);
      console.error(`${request.method} ${new URL(request.url).pathname} failed`, error);
      return errorResponse(500, 'internal', 'Something went wrong on the server; it has been logged');
    }
  };
}

const MAX_JSON_BYTES = 64 * 1024;

export function describeIssues(error: z.ZodError): { message: string; details: { path: string; message: string }[] } {
  const details = error.issues.map((issue) => ({
    path: issue.path.map(String).join('.'),
    message: issue.code === 'unrecognized_keys' ? `Unknown field(s): ${issue.keys.join(', ')}` : issue.message,
  }));
  const message = details.map((d) => (d.path ? `${d.path}: ${d.message}` : d.message)).join('; ');
  return { message, details };
}

/** Validates an input with its zod schema; a refusal is a 400 naming each field. */
export function validated<S extends z.ZodType>(schema: S, input: unknown): z.output<S> {
  const parsed = schema.safeParse(input);
  if (!parsed.success) {
    const { message, details } = describeIssues(parsed.error);
    throw new ApiError(400, 'invalid_input', message, details);
  }
  return parsed.data;
}

/** Reads a JSON body and validates it with the input's zod schema (the same one its form uses). */
export async function readJson<S extends z.ZodType>(request: Request, schema: S, maxBytes = MAX_JSON_BYTES): Promise<z.output<S>> {
  const type = request.headers.get('content-type') ?? '';
  if (!/^application\/json\b/i.test(type)) {
    throw new ApiError(415, 'unsupported_media_type', 'Send the body as JSON with Content-Type: application/json');
  }
  const text = await request.text();
  if (Buffer.byteLength(text, 'utf8') > maxBytes) {
    throw new ApiError(413, 'body_too_large', `The JSON body exceeds ${maxBytes} bytes`);
  }
  let body: unknown;
  try {
    body = JSON.parse(text);
  } catch (error) {
    throw new ApiError(400, 'invalid_json', `The body is not valid JSON: ${(error as Error).message}`);
  }
  return validated(schema, body);
}
