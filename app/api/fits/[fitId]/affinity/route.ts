import { db } from '@/db';
import { apiRoute, json, validated } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { affinityOf } from '@/lib/fits/service';
import { affinityQuerySchema } from '@/lib/fits/validation';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ fitId: string }> };

/** `?row=<row entity>&limit=20`: the column entities with the largest interaction γ_i·δ_j, for the map's neighbour panel. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { fitId } = await ctx.params;
  const { user } = await requireActor(request);
  const query = validated(affinityQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  return json(await affinityOf(db, user, fitId, query.row, query.limit));
});
