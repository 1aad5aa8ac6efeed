import 'server-only';
import { notFound } from 'next/navigation';
import { cache } from 'react';
import { db } from '@/db';
import { requireUser } from '@/lib/auth/actor';
import type { Role } from '@/lib/permissions';
import type { User } from '@/lib/users/users';
import { uuidParam } from '@/lib/validation/common';
import { findWorkspaceForMember, type Workspace } from './workspaces';

/**
 * For workspace pages: the signed-in member and their role, or the 404 page for anyone else.
 * Cached per request so the layout and the page share one lookup.
 */
export const workspaceForPage = cache(
  async (workspaceId: string): Promise<{ user: User; workspace: Workspace; role: Role }> => {
    const user = await requireUser(`/workspaces/${workspaceId}`);
    if (!uuidParam.safeParse(workspaceId).success) notFound();
    const found = await findWorkspaceForMember(db, workspaceId, user.id);
    if (!found) notFound();
    return { user, ...found };
  },
);
