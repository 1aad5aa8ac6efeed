import { z } from 'zod';
import { ROLES } from '@/lib/permissions';

export const emailField = z
  .string({ error: 'Enter an e-mail address' })
  .trim()
  .toLowerCase()
  .max(254, 'An e-mail address has at most 254 characters')
  .pipe(z.email({ error: 'Enter a valid e-mail address' }));

export const passwordField = z
  .string({ error: 'Enter a password' })
  .min(10, 'Use at least 10 characters')
  .max(200, 'Use at most 200 characters');

/** At sign-in we check the password, not its shape, so old passwords never lock anyone out. */
export const passwordToCheckField = z.string({ error: 'Enter your password' }).min(1, 'Enter your password').max(200);

export const personNameField = z
  .string({ error: 'Enter a name' })
  .trim()
  .min(1, 'Enter a name')
  .max(100, 'A name has at most 100 characters');

export const workspaceNameField = z
  .string({ error: 'Enter a workspace name' })
  .trim()
  .min(1, 'Enter a workspace name')
  .max(80, 'A workspace name has at most 80 characters');

export const roleField = z.enum(ROLES, { error: `Role must be one of: ${ROLES.join(', ')}` });

export const uuidParam = z.uuid();
