import { db } from '@/db';
import { notFound } from '@/lib/api/errors';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { uuidParam } from '@/lib/validation/common';
import { changeRoleSchema } from '@/lib/validation/workspaces';
import { changeRoleAs, removeMemberAs } from '@/lib/workspaces/service';

type Ctx = { params: Promise<{ workspaceId: string; userId: string }> };

async function memberParams(ctx: Ctx): Promise<{ workspaceId: string; userId: string }> {
  const params = await ctx.params;
  if (!uuidParam.safeParse(params.userId).success) throw notFound('No such member in this workspace');
  return params;
}

export const PATCH = apiRoute(async (request, ctx: Ctx) => {
  const { user } = await requireActor(request);
  const { workspaceId, userId } = await memberParams(ctx);
  const input = await readJson(request, changeRoleSchema);
  return json(await changeRoleAs(db, user, workspaceId, userId, input.role));
});

export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { user } = await requireActor(request);
  const { workspaceId, userId } = await memberParams(ctx);
  await removeMemberAs(db, user, workspaceId, userId);
  return new Response(null, { status: 204 });
});
