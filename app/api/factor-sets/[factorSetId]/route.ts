import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { deleteFactorSet } from '@/lib/factor-sets/factor-sets';

type Ctx = { params: Promise<{ factorSetId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  const { factorSet } = await requireFactorSetAccess(db, user.id, factorSetId, 'workspace.view');
  return json(factorSet);
});

export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  await requireFactorSetAccess(db, user.id, factorSetId, 'factor-sets.delete');
  await deleteFactorSet(db, factorSetId);
  return new Response(null, { status: 204 });
});
