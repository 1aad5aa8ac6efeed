import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { cancelProjection } from '@/lib/projections/service';

type Ctx = { params: Promise<{ projectionId: string }> };

export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { projectionId } = await ctx.params;
  const { user } = await requireActor(request);
  return json(await cancelProjection(db, user, projectionId));
});
