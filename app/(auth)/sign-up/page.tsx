import type { Metadata } from 'next';
import Link from 'next/link';
import { db } from '@/db';
import { hashSecret } from '@/lib/auth/secrets';
import { findInvitationByTokenHash } from '@/lib/workspaces/workspaces';
import { SignUpForm } from '../_private/account-forms';

export const metadata: Metadata = { title: 'Create an account' };

export default async function SignUpPage({
  searchParams,
}: {
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const params = await searchParams;
  const token = typeof params.invitation === 'string' && params.invitation.length <= 200 ? params.invitation : undefined;
  const invitation = token ? await findInvitationByTokenHash(db, hashSecret(token)) : undefined;
  const pending = invitation?.state === 'pending' ? invitation : undefined;
  return (
    <div className="border border-rule bg-paper-raised p-6">
      <h2 className="mb-2 text-xl font-semibold">Create an account</h2>
      {pending && (
        <p className="mb-4 text-sm text-ink-muted">
          You are joining <strong className="text-ink">{pending.workspaceName}</strong> as{' '}
          <strong className="text-ink">{pending.invitation.role}</strong>.
        </p>
      )}
      <SignUpForm invitationToken={pending ? token : undefined} invitedEmail={pending?.invitation.email} />
      <p className="mt-5 border-t border-rule pt-4 text-sm text-ink-muted">
        Already have an account?{' '}
        <Link className="text-accent underline-offset-2 hover:underline" href="/sign-in">
          Sign in
        </Link>
      </p>
    </div>
  );
}
