import { createHash, randomBytes } from 'node:crypto';
import { hash, verify } from '@node-rs/argon2';

/** OWASP's argon2id baseline (19 MiB, 2 passes, 1 lane): ~25 ms here, slow enough against guessing. */
const ARGON2_OPTIONS = { memoryCost: 19_456, timeCost: 2, parallelism: 1 } as const;

export function hashPassword(password: string): Promise<string> {
  return hash(password, ARGON2_OPTIONS);
}

export async function verifyPassword(passwordHash: string | null, password: string): Promise<boolean> {
  if (!passwordHash) {
    // Same cost as a real check, so the response time does not tell which accounts have a password.
    await hash(password, ARGON2_OPTIONS);
    return false;
  }
  try {
    return await verify(passwordHash, password);
  } catch (error) {
    console.error('password hash could not be verified (corrupt hash?)', error);
    return false;
  }
}

/** A random secret for links and tokens: 32 bytes, URL-safe. The prefix makes leaked tokens greppable. */
export function newSecret(prefix = ''): string {
  return prefix + randomBytes(32).toString('base64url');
}

/** Secrets are stored as SHA-256: they are random and long, so a slow hash buys nothing. */
export function hashSecret(secret: string): string {
  return createHash('sha256').update(secret, 'utf8').digest('hex');
}

export const ACCESS_TOKEN_PREFIX = 'ast_';
