import type { Metadata } from 'next';
import Link from 'next/link';
import { Brand } from '@/components/brand';
import { buttonClasses } from '@/components/ui/button';
import { db } from '@/db';
import { sessionUser } from '@/lib/auth/actor';
import { hashSecret } from '@/lib/auth/secrets';
import { findInvitationByTokenHash, findWorkspaceForMember } from '@/lib/workspaces/workspaces';
import { AcceptInvitationButton } from './accept-button';

export const metadata: Metadata = { title: 'Invitation' };

const STATE_MESSAGES = {
  accepted: 'This invitation has already been used.',
  expired: 'This invitation has expired. Ask the workspace owner for a new one.',
  revoked: 'This invitation was withdrawn by the workspace owner.',
} as const;

export default async function InvitationPage({ params }: { params: Promise<{ token: string }> }) {
  const { token } = await params;
  const details = token.length <= 200 ? await findInvitationByTokenHash(db, hashSecret(token)) : undefined;
  const user = await sessionUser();
  const here = `/invitations/${encodeURIComponent(token)}`;

  let body: React.ReactNode;
  if (!details) {
    body = <p className="text-ink-muted">This invitation link is not valid. Check that you copied all of it.</p>;
  } else if (details.state !== 'pending') {
    const member = user ? await findWorkspaceForMember(db, details.invitation.workspaceId, user.id) : undefined;
    body = (
      <>
        <p className="text-ink-muted">{STATE_MESSAGES[details.state]}</p>
        {member && (
          <Link className={buttonClasses('primary', 'mt-4 self-start')} href={`/workspaces/${details.invitation.workspaceId}`}>
            Open {details.workspaceName}
          </Link>
        )}
      </>
    );
  } else {
    const { invitation } = details;
    body = (
      <>
        <p>
          {details.invitedByName ?? 'A workspace owner'} invited <strong>{invitation.email}</strong> to the workspace{' '}
          <strong>{details.workspaceName}</strong> as <strong className="small-caps">{invitation.role}</strong>.
        </p>
        {user && user.email === invitation.email ? (
          <AcceptInvitationButton token={token} />
        ) : user ? (
          <p className="text-sm text-ink-muted">
            You are signed in as {user.email}. Sign out and sign in as {invitation.email} to accept.
          </p>
        ) : (
          <div className="flex flex-wrap gap-3">
            <Link
              className={buttonClasses('primary')}
              href={`/sign-up?invitation=${encodeURIComponent(token)}`}
            >
              Create an account to join
            </Link>
            <Link
              className={buttonClasses('secondary')}
              href={`/sign-in?callbackUrl=${encodeURIComponent(here)}&email=${encodeURIComponent(invitation.email)}`}
            >
              I have an account: sign in
            </Link>
          </div>
        )}
      </>
    );
  }

  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-rule px-6 py-4">
        <Brand />
      </header>
      <main id="main" className="mx-auto w-full max-w-lg px-6 py-16">
        <div className="flex flex-col gap-4 border border-rule bg-paper-raised p-6">
          <h1 className="text-xl font-semibold">Workspace invitation</h1>
          {body}
        </div>
      </main>
    </div>
  );
}
