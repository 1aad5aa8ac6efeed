import { z } from 'zod';
import { emailField, passwordToCheckField } from './common';

export const tokenNameField = z
  .string({ error: 'Name the token' })
  .trim()
  .min(1, 'Name the token')
  .max(80, 'A token name has at most 80 characters');

/** `POST /api/tokens`: scripts trade an e-mail and password for a token. */
export const createTokenWithPasswordSchema = z.strictObject({
  email: emailField,
  password: passwordToCheckField,
  name: tokenNameField,
});

/** The tokens page: the person is already signed in. */
export const createTokenSchema = z.strictObject({ name: tokenNameField });
export type CreateTokenInput = z.input<typeof createTokenSchema>;
