import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, conflict, notFound } from '@/lib/api/errors';
import { hashSecret, newSecret } from '@/lib/auth/secrets';
import { serverEnv } from '@/lib/env';
import { sendMail } from '@/lib/mail/mailer';
import { invitationMail } from '@/lib/mail/templates';
import type { Role } from '@/lib/permissions';
import { findUserRowByEmail, type User } from '@/lib/users/users';
import { requireWorkspaceAccess } from './access';
import {
  addMember,
  changeMemberRole,
  createInvitation,
  deleteWorkspace,
  findMember,
  type Invitation,
  listPendingInvitations,
  type Member,
  removeMember,
  renameWorkspace,
  revokeInvitation,
  type Workspace,
} from './workspaces';

/*
 * Workspace operations with their permission checks, shared by the route handlers and the server
 * actions so that both paths refuse exactly the same things.
 */

export async function renameWorkspaceAs(
  db: Kysely<Database>,
  actor: User,
  workspaceId: string,
  name: string,
): Promise<Workspace & { role: Role }> {
  const { role } = await requireWorkspaceAccess(db, actor.id, workspaceId, 'workspace.rename');
  return { ...(await renameWorkspace(db, workspaceId, name)), role };
}

export async function deleteWorkspaceAs(db: Kysely<Database>, actor: User, workspaceId: string): Promise<void> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'workspace.delete');
  await deleteWorkspace(db, workspaceId);
}

export async function addMemberAs(
  db: Kysely<Database>,
  actor: User,
  workspaceId: string,
  input: { email: string; role: Role },
): Promise<Member> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'members.manage');
  const user = await findUserRowByEmail(db, input.email);
  if (!user) throw notFound(`No account uses ${input.email}; send an invitation instead`);
  if (!(await addMember(db, workspaceId, user.id, input.role))) {
    throw conflict('already_member', `${input.email} is already a member of this workspace`);
  }
  const member = await findMember(db, workspaceId, user.id);
  if (!member) throw new Error('member vanished right after insert');
  return member;
}

async function requireMember(db: Kysely<Database>, workspaceId: string, userId: string): Promise<Member> {
  const member = await findMember(db, workspaceId, userId);
  if (!member) throw notFound('No such member in this workspace');
  return member;
}

export async function changeRoleAs(
  db: Kysely<Database>,
  actor: User,
  workspaceId: string,
  userId: string,
  role: Role,
): Promise<Member> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'members.manage');
  await requireMember(db, workspaceId, userId);
  await changeMemberRole(db, workspaceId, userId, role);
  return requireMember(db, workspaceId, userId);
}

/** Owners remove anyone; every member may remove themselves (leave). The last owner may do neither. */
export async function removeMemberAs(db: Kysely<Database>, actor: User, workspaceId: string, userId: string): Promise<void> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, actor.id === userId ? 'workspace.view' : 'members.manage');
  await requireMember(db, workspaceId, userId);
  await removeMember(db, workspaceId, userId);
}

export async function listInvitationsAs(db: Kysely<Database>, actor: User, workspaceId: string): Promise<Invitation[]> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'invitations.manage');
  return listPendingInvitations(db, workspaceId);
}

/**
 * Records the invitation and mails its link in one transaction: when the mail cannot be sent, no
 * invitation is left behind that nobody received.
 */
export async function inviteAs(
  db: Kysely<Database>,
  actor: User,
  workspaceId: string,
  input: { email: string; role: Role },
): Promise<Invitation> {
  const { workspace } = await requireWorkspaceAccess(db, actor.id, workspaceId, 'invitations.manage');
  const existing = await findUserRowByEmail(db, input.email);
  if (existing && (await findMember(db, workspaceId, existing.id))) {
    throw conflict('already_member', `${input.email} is already a member of this workspace`);
  }
  const env = serverEnv();
  const token = newSecret();
  return db.transaction().execute(async (tx) => {
    const invitation = await createInvitation(tx, {
      workspaceId,
      email: input.email,
      role: input.role,
      tokenHash: hashSecret(token),
      invitedBy: actor.id,
      ttlDays: env.INVITATION_TTL_DAYS,
    });
    try {
      await sendMail(
        invitationMail({
          to: input.email,
          workspaceName: workspace.name,
          inviterName: actor.name ?? actor.email,
          role: input.role,
          url: new URL(`/invitations/${token}`, env.APP_URL).toString(),
          expiresAt: invitation.expiresAt,
        }),
      );
    } catch (error) {
      console.error('invitation mail could not be sent', error);
      throw new ApiError(502, 'mail_failed', 'The invitation e-mail could not be sent; nothing was saved. Try again.');
    }
    return invitation;
  });
}

export async function revokeInvitationAs(db: Kysely<Database>, actor: User, workspaceId: string, invitationId: string): Promise<void> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'invitations.manage');
  if (!(await revokeInvitation(db, workspaceId, invitationId))) throw notFound('No such pending invitation');
}
