import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { cancelFit } from '@/lib/fits/service';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ fitId: string }> };

export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { fitId } = await ctx.params;
  const { user } = await requireActor(request);
  return json(await cancelFit(db, user, fitId));
});
