import { describe, expect, it } from 'vitest';
import { ACCESS_TOKEN_PREFIX, hashPassword, hashSecret, newSecret, verifyPassword } from '@/lib/auth/secrets';

describe('secrets', () => {
  it('hashes with SHA-256 (FIPS 180-2, appendix B.1: "abc")', () => {
    expect(hashSecret('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });

  it('makes distinct 256-bit URL-safe secrets', () => {
    const a = newSecret(ACCESS_TOKEN_PREFIX);
    const b = newSecret(ACCESS_TOKEN_PREFIX);
    expect(a).not.toBe(b);
    expect(a).toMatch(/^ast_[A-Za-z0-9_-]{43}$/);
  });

  it('stores passwords as argon2id and checks them', async () => {
    const hash = await hashPassword('asterism-demo');
    expect(hash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
    expect(await verifyPassword(hash, 'asterism-demo')).toBe(true);
    expect(await verifyPassword(hash, 'asterism-demo ')).toBe(false);
    expect(await verifyPassword(null, 'anything')).toBe(false);
  });
});
