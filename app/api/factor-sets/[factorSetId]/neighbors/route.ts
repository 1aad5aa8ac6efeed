import { z } from 'zod';
import { db } from '@/db';
import { apiRoute, json, validated } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { latentNeighbours } from '@/lib/factor-sets/neighbours';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ factorSetId: string }> };

const querySchema = z.strictObject({
  entity: z.string().min(1, 'entity is the id of an entity').max(500),
  k: z.coerce.number().int().min(1).max(200).default(10),
  metric: z.enum(['euclidean', 'cosine']).default('euclidean'),
});

/** `?entity=ID&k=10&metric=cosine` → the entity's nearest latent neighbours (and top partner affinities). */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  const { factorSet } = await requireFactorSetAccess(db, user.id, factorSetId, 'workspace.view');
  const query = validated(querySchema, Object.fromEntries(new URL(request.url).searchParams));
  return json(await latentNeighbours(db, factorSet, query.entity, query.k, query.metric));
});
