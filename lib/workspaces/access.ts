import { forbidden, notFound } from '@/lib/api/errors';
import { type Action, can, type Role } from '@/lib/permissions';
import type { DbOrTx } from '@/lib/users/users';
import { uuidParam } from '@/lib/validation/common';
import { findWorkspaceForMember, type Workspace } from './workspaces';

export const WORKSPACE_NOT_FOUND = 'Workspace not found';

/**
 * The authorisation gate for everything inside a workspace. Someone outside the workspace learns
 * nothing (404, as if it did not exist); a member whose role lacks the action gets 403.
 */
export async function requireWorkspaceAccess(
  db: DbOrTx,
  userId: string,
  workspaceId: string,
  action: Action,
): Promise<{ workspace: Workspace; role: Role }> {
  if (!uuidParam.safeParse(workspaceId).success) throw notFound(WORKSPACE_NOT_FOUND);
  const found = await findWorkspaceForMember(db, workspaceId, userId);
  if (!found) throw notFound(WORKSPACE_NOT_FOUND);
  if (!can(found.role, action)) throw forbidden(`A ${found.role} may not do this (${action})`);
  return found;
}
