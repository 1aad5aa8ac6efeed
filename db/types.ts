import type { ColumnType, Generated, Insertable, Selectable, Updateable } from 'kysely';

/** Row types as PostgreSQL stores them. Domain types live in lib/ and are built by explicit mappers. */

type Timestamp = ColumnType<Date, Date | string | undefined, Date | string>;
type NullableTimestamp = ColumnType<Date | null, Date | string | null | undefined, Date | string | null>;

export type RoleColumn = 'owner' | 'analyst' | 'expert' | 'presenter' | 'reviewer' | 'viewer';

export interface UsersTable {
  id: Generated<string>;
  email: string;
  name: string | null;
  password_hash: string | null;
  email_verified_at: NullableTimestamp;
  /** Bumped when the password changes so that every earlier session stops working. */
  session_version: Generated<number>;
  created_at: Generated<Date>;
}

export interface VerificationTokensTable {
  identifier: string;
  /** Already hashed by Auth.js before it reaches the adapter. */
  token: string;
  expires_at: Timestamp;
}

export interface WorkspacesTable {
  id: Generated<string>;
  name: string;
  created_by: string | null;
  created_at: Generated<Date>;
  updated_at: Generated<Date>;
}

export interface MembershipsTable {
  workspace_id: string;
  user_id: string;
  role: RoleColumn;
  created_at: Generated<Date>;
}

export interface InvitationsTable {
  id: Generated<string>;
  workspace_id: string;
  email: string;
  role: RoleColumn;
  token_hash: string;
  invited_by: string | null;
  expires_at: Timestamp;
  accepted_at: NullableTimestamp;
  accepted_by: string | null;
  revoked_at: NullableTimestamp;
  created_at: Generated<Date>;
}

export interface AccessTokensTable {
  id: Generated<string>;
  user_id: string;
  name: string;
  token_hash: string;
  /** First characters of the token, shown so people can tell their tokens apart. */
  token_prefix: string;
  last_used_at: NullableTimestamp;
  revoked_at: NullableTimestamp;
  created_at: Generated<Date>;
}

export interface PasswordResetsTable {
  id: Generated<string>;
  user_id: string;
  token_hash: string;
  expires_at: Timestamp;
  used_at: NullableTimestamp;
  created_at: Generated<Date>;
}

export interface SignInFailuresTable {
  id: Generated<string>;
  email: string;
  address: string;
  created_at: Generated<Date>;
}

export interface Database {
  users: UsersTable;
  verification_tokens: VerificationTokensTable;
  workspaces: WorkspacesTable;
  memberships: MembershipsTable;
  invitations: InvitationsTable;
  access_tokens: AccessTokensTable;
  password_resets: PasswordResetsTable;
  sign_in_failures: SignInFailuresTable;
}

export type UserRow = Selectable<UsersTable>;
export type NewUserRow = Insertable<UsersTable>;
export type UserUpdate = Updateable<UsersTable>;
export type WorkspaceRow = Selectable<WorkspacesTable>;
export type NewWorkspaceRow = Insertable<WorkspacesTable>;
export type WorkspaceUpdate = Updateable<WorkspacesTable>;
export type MembershipRow = Selectable<MembershipsTable>;
export type NewMembershipRow = Insertable<MembershipsTable>;
export type InvitationRow = Selectable<InvitationsTable>;
export type NewInvitationRow = Insertable<InvitationsTable>;
export type AccessTokenRow = Selectable<AccessTokensTable>;
export type NewAccessTokenRow = Insertable<AccessTokensTable>;
export type PasswordResetRow = Selectable<PasswordResetsTable>;
