import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { deleteProjection, requireProjectionAccess } from '@/lib/projections/service';

type Ctx = { params: Promise<{ projectionId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { projectionId } = await ctx.params;
  const { user } = await requireActor(request);
  return json(await requireProjectionAccess(db, user, projectionId, 'workspace.view'));
});

export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { projectionId } = await ctx.params;
  const { user } = await requireActor(request);
  await deleteProjection(db, user, projectionId);
  return new Response(null, { status: 204 });
});
