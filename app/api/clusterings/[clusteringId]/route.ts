import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { clusteringForReader } from '@/lib/clusterings/service';

type Ctx = { params: Promise<{ clusteringId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { clusteringId } = await ctx.params;
  const { user } = await requireActor(request);
  return json(await clusteringForReader(db, user, clusteringId));
});
