import { z } from 'zod';

/** Every setting the server reads, validated once. Secrets are never logged. */
const flag = z
  .enum(['0', '1', 'true', 'false', ''])
  .optional()
  .transform((v) => v === '1' || v === 'true');

const positiveInt = (fallback: number) => z.coerce.number().int().positive().default(fallback);

export const serverEnvSchema = z.object({
  DATABASE_URL: z.string().regex(/^postgres(ql)?:\/\//, 'must be a postgres:// connection string'),
  AUTH_SECRET: z.string().min(32, 'must be at least 32 characters'),
  /** Public base URL, used for links in e-mails. */
  APP_URL: z.url().default('http://localhost:3000'),
  SMTP_HOST: z.string().default('127.0.0.1'),
  SMTP_PORT: positiveInt(2525),
  /** true: implicit TLS (port 465 style); false: plain or STARTTLS. */
  SMTP_SECURE: flag,
  /** The local sink speaks plain SMTP; a real provider needs TLS. */
  SMTP_IGNORE_TLS: flag,
  SMTP_USER: z.string().optional(),
  SMTP_PASSWORD: z.string().optional(),
  MAIL_FROM: z.string().default('Asterism <no-reply@asterism.local>'),
  /** Where the local SMTP sink stores messages; when set, /dev/mail lists them. Leave unset in production. */
  DEV_MAIL_DIR: z.string().optional(),
  /** Failed password sign-ins allowed per account, and per client address, inside the window. */
  SIGN_IN_MAX_FAILURES_PER_ACCOUNT: positiveInt(5),
  SIGN_IN_MAX_FAILURES_PER_ADDRESS: positiveInt(20),
  SIGN_IN_FAILURE_WINDOW_MINUTES: positiveInt(15),
  INVITATION_TTL_DAYS: positiveInt(7),
  PASSWORD_RESET_TTL_MINUTES: positiveInt(60),
  /** Where uploads wait between upload, preview and confirmation; removed after import or after an hour. */
  UPLOAD_DIR: z.string().default('.data/uploads'),
  /** Import limits: raise them for bigger fits, at the cost of server memory (about 3× the file). */
  IMPORT_MAX_BYTES: positiveInt(2 * 1024 ** 3),
  IMPORT_MAX_ROWS: positiveInt(2_000_000),
  IMPORT_MAX_DIMS: positiveInt(512),
  IMPORT_MAX_DRAWS: positiveInt(5_000),
});

export type ServerEnv = z.infer<typeof serverEnvSchema>;

let cached: ServerEnv | undefined;

/** Parsed lazily so that `next build` can import server modules without a database configured. */
export function serverEnv(): ServerEnv {
  if (typeof window !== 'undefined') throw new Error('serverEnv() is server-only');
  if (cached) return cached;
  const parsed = serverEnvSchema.safeParse(process.env);
  if (!parsed.success) {
    const problems = parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ');
    throw new Error(`invalid server environment: ${problems}`);
  }
  cached = parsed.data;
  return cached;
}
