import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { deleteFit, requireFitAccess } from '@/lib/fits/service';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ fitId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { fitId } = await ctx.params;
  const { user } = await requireActor(request);
  return json(await requireFitAccess(db, user, fitId, 'workspace.view'));
});

export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { fitId } = await ctx.params;
  const { user } = await requireActor(request);
  await deleteFit(db, user, fitId);
  return new Response(null, { status: 204 });
});
