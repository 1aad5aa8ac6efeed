'use server';

import { AuthError } from 'next-auth';
import { redirect } from 'next/navigation';
import { z } from 'zod';
import { db } from '@/db';
import { type ActionResult, runAction, safeReturnPath } from '@/lib/api/action-result';
import { ApiError } from '@/lib/api/errors';
import { requireUser } from '@/lib/auth/actor';
import { requestPasswordReset, resetPassword, signUp } from '@/lib/auth/accounts';
import { signIn, signOut } from '@/lib/auth';
import { hashSecret } from '@/lib/auth/secrets';
import { findUserRowByEmail } from '@/lib/users/users';
import {
  forgotPasswordSchema,
  magicLinkSchema,
  resetPasswordSchema,
  signInSchema,
  signUpSchema,
} from '@/lib/validation/auth';
import { acceptInvitation } from '@/lib/workspaces/workspaces';

function signInFailure(error: unknown): string {
  if (error instanceof AuthError) {
    const code = (error as AuthError & { code?: string }).code;
    if (code === 'rate_limited') return 'Too many failed attempts. Wait 15 minutes, or reset your password.';
    if (error.type === 'CredentialsSignin') return 'E-mail or password is wrong.';
    console.error('sign-in failed', error);
    return 'Sign-in failed; please try again.';
  }
  throw error;
}

async function passwordSignIn(email: string, password: string): Promise<string | null> {
  try {
    await signIn('credentials', { email, password, redirect: false });
    return null;
  } catch (error) {
    return signInFailure(error);
  }
}

export async function signInWithPassword(input: unknown, returnTo: unknown): Promise<ActionResult> {
  const result = await runAction(signInSchema, input, async (data) => passwordSignIn(data.email, data.password));
  if (!result.ok) return result;
  if (result.data) return { ok: false, error: result.data };
  redirect(safeReturnPath(returnTo));
}

/** Mails a sign-in link to an existing account; the same answer either way, so the form reveals nobody. */
export async function requestMagicLink(input: unknown, returnTo: unknown): Promise<ActionResult> {
  const result = await runAction(magicLinkSchema, input, async (data) => {
    if (!(await findUserRowByEmail(db, data.email))) return;
    try {
      await signIn('nodemailer', { email: data.email, redirect: false, redirectTo: safeReturnPath(returnTo) });
    } catch (error) {
      if (!(error instanceof AuthError)) throw error;
      console.error('magic link could not be sent', error);
      throw error;
    }
  });
  if (!result.ok) return result;
  redirect('/sign-in/check-email');
}

export async function signUpAction(input: unknown): Promise<ActionResult> {
  const result = await runAction(signUpSchema, input, async (data) => {
    const user = await signUp(db, data);
    const failure = await passwordSignIn(data.email, data.password);
    if (failure) throw new Error(`sign-in right after sign-up failed: ${failure}`);
    if (!data.invitationToken) return '/workspaces';
    try {
      const accepted = await acceptInvitation(db, hashSecret(data.invitationToken), user.id);
      return `/workspaces/${accepted.workspaceId}`;
    } catch (error) {
      if (!(error instanceof ApiError)) throw error;
      // The account stands; the invitation page explains why this link no longer works.
      return `/invitations/${encodeURIComponent(data.invitationToken)}`;
    }
  });
  if (!result.ok) return result;
  redirect(result.data);
}

export async function forgotPasswordAction(input: unknown): Promise<ActionResult> {
  return runAction(forgotPasswordSchema, input, async (data) => {
    await requestPasswordReset(db, data.email);
    return null;
  });
}

export async function resetPasswordAction(input: unknown): Promise<ActionResult> {
  const result = await runAction(resetPasswordSchema, input, async (data) => {
    await resetPassword(db, data.token, data.password);
    return null;
  });
  if (!result.ok) return result;
  redirect('/sign-in?reset=1');
}

export async function signOutAction(): Promise<void> {
  await signOut({ redirect: false });
  redirect('/sign-in');
}

/** Used by the invitation page's accept button. */
export async function acceptInvitationAction(token: unknown): Promise<ActionResult> {
  const user = await requireUser();
  const result = await runAction(z.string().min(1).max(200), token, (t) => acceptInvitation(db, hashSecret(t), user.id));
  if (!result.ok) return result;
  redirect(`/workspaces/${result.data.workspaceId}`);
}
