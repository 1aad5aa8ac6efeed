import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { renameWorkspaceSchema } from '@/lib/validation/workspaces';
import { requireWorkspaceAccess } from '@/lib/workspaces/access';
import { deleteWorkspaceAs, renameWorkspaceAs } from '@/lib/workspaces/service';

type Ctx = { params: Promise<{ workspaceId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  const { workspace, role } = await requireWorkspaceAccess(db, user.id, workspaceId, 'workspace.view');
  return json({ ...workspace, role });
});

export const PATCH = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, renameWorkspaceSchema);
  return json(await renameWorkspaceAs(db, user, workspaceId, input.name));
});

export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  await deleteWorkspaceAs(db, user, workspaceId);
  return new Response(null, { status: 204 });
});
