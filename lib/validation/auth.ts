import { z } from 'zod';
import { emailField, passwordField, passwordToCheckField, personNameField } from './common';

export const signUpSchema = z.strictObject({
  name: personNameField,
  email: emailField,
  password: passwordField,
  /** Set when the person arrives from an invitation link; accepted right after sign-up. */
  invitationToken: z.string().max(200).optional(),
});
export type SignUpInput = z.input<typeof signUpSchema>;

export const signInSchema = z.strictObject({
  email: emailField,
  password: passwordToCheckField,
});
export type SignInInput = z.input<typeof signInSchema>;

export const magicLinkSchema = z.strictObject({ email: emailField });
export type MagicLinkInput = z.input<typeof magicLinkSchema>;

export const forgotPasswordSchema = z.strictObject({ email: emailField });
export type ForgotPasswordInput = z.input<typeof forgotPasswordSchema>;

export const resetPasswordSchema = z
  .strictObject({
    token: z.string().min(1).max(200),
    password: passwordField,
    confirm: z.string(),
  })
  .refine((v) => v.password === v.confirm, { path: ['confirm'], error: 'The two passwords differ' });
export type ResetPasswordInput = z.input<typeof resetPasswordSchema>;
