import { type Kysely, sql } from 'kysely';
import type { Database, InvitationRow, RoleColumn, WorkspaceRow } from '@/db/types';
import { conflict } from '@/lib/api/errors';
import type { Role } from '@/lib/permissions';
import type { DbOrTx } from '@/lib/users/users';

export interface Workspace {
  id: string;
  name: string;
  createdAt: Date;
  updatedAt: Date;
}

export interface WorkspaceWithRole extends Workspace {
  role: Role;
  memberCount: number;
}

export interface Member {
  userId: string;
  email: string;
  name: string | null;
  role: Role;
  joinedAt: Date;
}

export interface Invitation {
  id: string;
  workspaceId: string;
  email: string;
  role: Role;
  expiresAt: Date;
  acceptedAt: Date | null;
  revokedAt: Date | null;
  createdAt: Date;
}

export function toWorkspace(row: WorkspaceRow): Workspace {
  return { id: row.id, name: row.name, createdAt: row.created_at, updatedAt: row.updated_at };
}

export function toInvitation(row: InvitationRow): Invitation {
  return {
    id: row.id,
    workspaceId: row.workspace_id,
    email: row.email,
    role: row.role,
    expiresAt: row.expires_at,
    acceptedAt: row.accepted_at,
    revokedAt: row.revoked_at,
    createdAt: row.created_at,
  };
}

export async function listWorkspacesForUser(db: DbOrTx, userId: string): Promise<WorkspaceWithRole[]> {
  const rows = await db
    .selectFrom('workspaces as w')
    .innerJoin('memberships as m', 'm.workspace_id', 'w.id')
    .where('m.user_id', '=', userId)
    .selectAll('w')
    .select('m.role')
    .select((eb) =>
      eb
        .selectFrom('memberships as all_m')
        .whereRef('all_m.workspace_id', '=', 'w.id')
        .select((e) => e.fn.countAll<number>().as('n'))
        .as('member_count'),
    )
    .orderBy('w.name')
    .orderBy('w.id')
    .execute();
  return rows.map((r) => ({ ...toWorkspace(r), role: r.role, memberCount: Number(r.member_count ?? 0) }));
}

/** Workspace and the person's role in it, or undefined when they are not a member (or it does not exist). */
export async function findWorkspaceForMember(
  db: DbOrTx,
  workspaceId: string,
  userId: string,
): Promise<{ workspace: Workspace; role: Role } | undefined> {
  const row = await db
    .selectFrom('workspaces as w')
    .innerJoin('memberships as m', 'm.workspace_id', 'w.id')
    .where('w.id', '=', workspaceId)
    .where('m.user_id', '=', userId)
    .selectAll('w')
    .select('m.role')
    .executeTakeFirst();
  return row ? { workspace: toWorkspace(row), role: row.role } : undefined;
}

/** Creates a workspace with its creator as the first owner, in one transaction. */
export async function createWorkspace(db: Kysely<Database>, userId: string, name: string): Promise<Workspace> {
  return db.transaction().execute(async (tx) => {
    const row = await tx
      .insertInto('workspaces')
      .values({ name, created_by: userId })
      .returningAll()
      .executeTakeFirstOrThrow();
    await tx.insertInto('memberships').values({ workspace_id: row.id, user_id: userId, role: 'owner' }).execute();
    return toWorkspace(row);
  });
}

export async function renameWorkspace(db: DbOrTx, workspaceId: string, name: string): Promise<Workspace> {
  const row = await db
    .updateTable('workspaces')
    .set({ name, updated_at: new Date() })
    .where('id', '=', workspaceId)
    .returningAll()
    .executeTakeFirstOrThrow();
  return toWorkspace(row);
}

/** Deletes the workspace; memberships and invitations go with it (foreign keys cascade). */
export async function deleteWorkspace(db: DbOrTx, workspaceId: string): Promise<void> {
  await db.deleteFrom('workspaces').where('id', '=', workspaceId).execute();
}

function membersQuery(db: DbOrTx, workspaceId: string) {
  return db
    .selectFrom('memberships as m')
    .innerJoin('users as u', 'u.id', 'm.user_id')
    .where('m.workspace_id', '=', workspaceId)
    .select(['m.user_id', 'u.email', 'u.name', 'm.role', 'm.created_at']);
}

function toMember(row: { user_id: string; email: string; name: string | null; role: Role; created_at: Date }): Member {
  return { userId: row.user_id, email: row.email, name: row.name, role: row.role, joinedAt: row.created_at };
}

export async function listMembers(db: DbOrTx, workspaceId: string): Promise<Member[]> {
  const rows = await membersQuery(db, workspaceId).orderBy('m.created_at').orderBy('u.email').execute();
  return rows.map(toMember);
}

export async function findMember(db: DbOrTx, workspaceId: string, userId: string): Promise<Member | undefined> {
  const row = await membersQuery(db, workspaceId).where('m.user_id', '=', userId).executeTakeFirst();
  return row ? toMember(row) : undefined;
}

/**
 * Locks the workspace's owner rows so that two concurrent demotions cannot both see "another owner
 * remains" and leave the workspace with none.
 */
async function lockOwners(tx: DbOrTx, workspaceId: string): Promise<string[]> {
  const rows = await tx
    .selectFrom('memberships')
    .select('user_id')
    .where('workspace_id', '=', workspaceId)
    .where('role', '=', 'owner')
    .forUpdate()
    .execute();
  return rows.map((r) => r.user_id);
}

const LAST_OWNER_MESSAGE = 'A workspace needs at least one owner: make someone else an owner first';

/** Adds a member; false when they already belong (the caller reports the conflict). */
export async function addMember(db: DbOrTx, workspaceId: string, userId: string, role: RoleColumn): Promise<boolean> {
  const result = await db
    .insertInto('memberships')
    .values({ workspace_id: workspaceId, user_id: userId, role })
    .onConflict((oc) => oc.columns(['workspace_id', 'user_id']).doNothing())
    .executeTakeFirst();
  return (result.numInsertedOrUpdatedRows ?? 0n) > 0n;
}

export async function changeMemberRole(db: Kysely<Database>, workspaceId: string, userId: string, role: Role): Promise<void> {
  await db.transaction().execute(async (tx) => {
    const owners = await lockOwners(tx, workspaceId);
    if (role !== 'owner' && owners.length === 1 && owners[0] === userId) {
      throw conflict('last_owner', LAST_OWNER_MESSAGE);
    }
    await tx
      .updateTable('memberships')
      .set({ role })
      .where('workspace_id', '=', workspaceId)
      .where('user_id', '=', userId)
      .execute();
  });
}

export async function removeMember(db: Kysely<Database>, workspaceId: string, userId: string): Promise<void> {
  await db.transaction().execute(async (tx) => {
    const owners = await lockOwners(tx, workspaceId);
    if (owners.length === 1 && owners[0] === userId) throw conflict('last_owner', LAST_OWNER_MESSAGE);
    await tx.deleteFrom('memberships').where('workspace_id', '=', workspaceId).where('user_id', '=', userId).execute();
  });
}

export async function createInvitation(
  db: DbOrTx,
  input: { workspaceId: string; email: string; role: Role; tokenHash: string; invitedBy: string; ttlDays: number },
): Promise<Invitation> {
  const row = await db
    .insertInto('invitations')
    .values({
      workspace_id: input.workspaceId,
      email: input.email,
      role: input.role,
      token_hash: input.tokenHash,
      invited_by: input.invitedBy,
      expires_at: sql<Date>`now() + make_interval(days => ${input.ttlDays})`,
    })
    .returningAll()
    .executeTakeFirstOrThrow();
  return toInvitation(row);
}

/** Invitations still waiting for an answer. */
export async function listPendingInvitations(db: DbOrTx, workspaceId: string): Promise<Invitation[]> {
  const rows = await db
    .selectFrom('invitations')
    .selectAll()
    .where('workspace_id', '=', workspaceId)
    .where('accepted_at', 'is', null)
    .where('revoked_at', 'is', null)
    .where('expires_at', '>', sql<Date>`now()`)
    .orderBy('created_at', 'desc')
    .execute();
  return rows.map(toInvitation);
}

export async function revokeInvitation(db: DbOrTx, workspaceId: string, invitationId: string): Promise<boolean> {
  const result = await db
    .updateTable('invitations')
    .set({ revoked_at: new Date() })
    .where('id', '=', invitationId)
    .where('workspace_id', '=', workspaceId)
    .where('accepted_at', 'is', null)
    .where('revoked_at', 'is', null)
    .executeTakeFirst();
  return result.numUpdatedRows > 0n;
}

export type InvitationState = 'pending' | 'accepted' | 'expired' | 'revoked';

export interface InvitationDetails {
  invitation: Invitation;
  workspaceName: string;
  invitedByName: string | null;
  state: InvitationState;
}

export async function findInvitationByTokenHash(db: DbOrTx, tokenHash: string): Promise<InvitationDetails | undefined> {
  const row = await db
    .selectFrom('invitations as i')
    .innerJoin('workspaces as w', 'w.id', 'i.workspace_id')
    .leftJoin('users as u', 'u.id', 'i.invited_by')
    .where('i.token_hash', '=', tokenHash)
    .selectAll('i')
    .select(['w.name as workspace_name', 'u.name as inviter_name', 'u.email as inviter_email'])
    .executeTakeFirst();
  if (!row) return undefined;
  const invitation = toInvitation(row);
  const state: InvitationState = invitation.revokedAt
    ? 'revoked'
    : invitation.acceptedAt
      ? 'accepted'
      : invitation.expiresAt.getTime() <= Date.now()
        ? 'expired'
        : 'pending';
  return { invitation, workspaceName: row.workspace_name, invitedByName: row.inviter_name ?? row.inviter_email, state };
}

/**
 * Accepts an invitation for `userId`: the person joins with the invited role (or keeps a role they
 * already hold). The invitation row is locked so one link cannot be spent twice.
 */
export async function acceptInvitation(
  db: Kysely<Database>,
  tokenHash: string,
  userId: string,
): Promise<{ workspaceId: string; role: Role }> {
  return db.transaction().execute(async (tx) => {
    const row = await tx
      .selectFrom('invitations')
      .selectAll()
      .where('token_hash', '=', tokenHash)
      .forUpdate()
      .executeTakeFirst();
    if (!row || row.revoked_at) throw conflict('invitation_invalid', 'This invitation is no longer valid');
    if (row.accepted_at) throw conflict('invitation_used', 'This invitation has already been used');
    if (row.expires_at.getTime() <= Date.now()) {
      throw conflict('invitation_expired', 'This invitation has expired; ask for a new one');
    }
    const user = await tx.selectFrom('users').select('email').where('id', '=', userId).executeTakeFirstOrThrow();
    if (user.email !== row.email) {
      throw conflict('invitation_other_address', `This invitation was sent to ${row.email}; sign in with that address`);
    }
    await addMember(tx, row.workspace_id, userId, row.role);
    await tx
      .updateTable('invitations')
      .set({ accepted_at: new Date(), accepted_by: userId })
      .where('id', '=', row.id)
      .execute();
    const membership = await tx
      .selectFrom('memberships')
      .select('role')
      .where('workspace_id', '=', row.workspace_id)
      .where('user_id', '=', userId)
      .executeTakeFirstOrThrow();
    return { workspaceId: row.workspace_id, role: membership.role };
  });
}
