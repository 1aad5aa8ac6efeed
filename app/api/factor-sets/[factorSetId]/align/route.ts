import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { alignToAnother } from '@/lib/factor-sets/align-service';
import { alignSchema } from '@/lib/validation/factor-sets';

type Ctx = { params: Promise<{ factorSetId: string }> };

/** `{to: otherId}` → Procrustes disparity and rotation of this factor set onto the other. */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, alignSchema);
  return json(await alignToAnother(db, user, factorSetId, input.to));
});
