import type { Metadata } from 'next';
import { db } from '@/db';
import { can } from '@/lib/permissions';
import { workspaceForPage } from '@/lib/workspaces/page-access';
import { listMembers, listPendingInvitations } from '@/lib/workspaces/workspaces';
import { type InvitationDto, type MemberDto, MembersPanel } from '../_private/members-panel';

export const metadata: Metadata = { title: 'Members' };

export default async function MembersPage({ params }: { params: Promise<{ workspaceId: string }> }) {
  const { workspaceId } = await params;
  const { user, workspace, role } = await workspaceForPage(workspaceId);
  const canManage = can(role, 'members.manage');
  const [members, invitations] = await Promise.all([
    listMembers(db, workspace.id),
    canManage ? listPendingInvitations(db, workspace.id) : Promise.resolve([]),
  ]);
  const initialMembers: MemberDto[] = members.map((m) => ({ ...m, joinedAt: m.joinedAt.toISOString() }));
  const initialInvitations: InvitationDto[] = invitations.map((i) => ({
    id: i.id,
    email: i.email,
    role: i.role,
    expiresAt: i.expiresAt.toISOString(),
    createdAt: i.createdAt.toISOString(),
  }));
  return (
    <MembersPanel
      workspaceId={workspace.id}
      currentUserId={user.id}
      canManage={canManage}
      initialMembers={initialMembers}
      initialInvitations={initialInvitations}
    />
  );
}
