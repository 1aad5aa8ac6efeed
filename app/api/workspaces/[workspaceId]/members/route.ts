import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { addMemberSchema } from '@/lib/validation/workspaces';
import { requireWorkspaceAccess } from '@/lib/workspaces/access';
import { addMemberAs } from '@/lib/workspaces/service';
import { listMembers } from '@/lib/workspaces/workspaces';

type Ctx = { params: Promise<{ workspaceId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  await requireWorkspaceAccess(db, user.id, workspaceId, 'members.view');
  return json({ items: await listMembers(db, workspaceId) });
});

/** Adds someone who already has an account; for anyone else, send an invitation. */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, addMemberSchema);
  return json(await addMemberAs(db, user, workspaceId, input), 201);
});
