import { describe, expect, it } from 'vitest';
import { signUpSchema } from '@/lib/validation/auth';
import { createTokenWithPasswordSchema } from '@/lib/validation/tokens';
import { createWorkspaceSchema, inviteSchema } from '@/lib/validation/workspaces';

describe('input schemas', () => {
  it('normalises e-mail addresses to trimmed lower case', () => {
    const parsed = inviteSchema.parse({ email: '  Tove.Larch@Example.TEST ', role: 'expert' });
    expect(parsed.email).toBe('tove.larch@example.test');
  });

  it('refuses an invalid e-mail with a readable message', () => {
    const result = inviteSchema.safeParse({ email: 'not-an-address', role: 'expert' });
    expect(result.success).toBe(false);
    expect(result.error?.issues[0]?.message).toBe('Enter a valid e-mail address');
  });

  it('refuses unknown fields', () => {
    const result = createWorkspaceSchema.safeParse({ name: 'Larkspur', owner: 'me' });
    expect(result.success).toBe(false);
    expect(result.error?.issues[0]?.code).toBe('unrecognized_keys');
  });

  it('bounds workspace names to 1–80 characters after trimming', () => {
    expect(createWorkspaceSchema.safeParse({ name: '   ' }).success).toBe(false);
    expect(createWorkspaceSchema.safeParse({ name: 'x'.repeat(80) }).success).toBe(true);
    expect(createWorkspaceSchema.safeParse({ name: 'x'.repeat(81) }).success).toBe(false);
    expect(createWorkspaceSchema.parse({ name: '  Holiday coast  ' }).name).toBe('Holiday coast');
  });

  it('refuses a role that is not one of the six', () => {
    expect(inviteSchema.safeParse({ email: 'a@b.test', role: 'admin' }).success).toBe(false);
  });

  it('asks for passwords of at least 10 characters at sign-up', () => {
    expect(signUpSchema.safeParse({ name: 'A', email: 'a@b.test', password: 'short' }).success).toBe(false);
    expect(signUpSchema.safeParse({ name: 'A', email: 'a@b.test', password: 'long enough!' }).success).toBe(true);
  });

  it('needs a name, e-mail and password for a token', () => {
    expect(createTokenWithPasswordSchema.safeParse({ email: 'a@b.test', password: 'x' }).success).toBe(false);
  });
});
