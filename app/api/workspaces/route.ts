import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { createWorkspaceSchema } from '@/lib/validation/workspaces';
import { createWorkspace, listWorkspacesForUser } from '@/lib/workspaces/workspaces';

export const GET = apiRoute(async (request) => {
  const { user } = await requireActor(request);
  return json({ items: await listWorkspacesForUser(db, user.id) });
});

/** Anyone signed in may create a workspace and becomes its first owner. */
export const POST = apiRoute(async (request) => {
  const { user } = await requireActor(request);
  const input = await readJson(request, createWorkspaceSchema);
  const workspace = await createWorkspace(db, user.id, input.name);
  return json({ ...workspace, role: 'owner', memberCount: 1 }, 201);
});
