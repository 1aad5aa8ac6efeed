import { notFound } from '@/lib/api/errors';
import type { Action, Role } from '@/lib/permissions';
import type { DbOrTx } from '@/lib/users/users';
import { uuidParam } from '@/lib/validation/common';
import { requireWorkspaceAccess } from '@/lib/workspaces/access';
import { type FactorSet, findFactorSet } from './factor-sets';

const NOT_FOUND = 'Factor set not found';

/** A factor set is visible exactly to the members of its workspace; everyone else gets 404. */
export async function requireFactorSetAccess(
  db: DbOrTx,
  userId: string,
  factorSetId: string,
  action: Action,
): Promise<{ factorSet: FactorSet; role: Role }> {
  if (!uuidParam.safeParse(factorSetId).success) throw notFound(NOT_FOUND);
  const factorSet = await findFactorSet(db, factorSetId);
  if (!factorSet) throw notFound(NOT_FOUND);
  try {
    const { role } = await requireWorkspaceAccess(db, userId, factorSet.workspaceId, action);
    return { factorSet, role };
  } catch (error) {
    // Outside the workspace the factor set does not exist, whatever the workspace check said.
    if (error instanceof Error && 'status' in error && error.status === 404) throw notFound(NOT_FOUND);
    throw error;
  }
}
