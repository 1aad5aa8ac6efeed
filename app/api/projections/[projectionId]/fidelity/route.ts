import { db } from '@/db';
import { apiRoute } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { projectionStream } from '@/lib/projections/export';
import { requireProjectionAccess } from '@/lib/projections/service';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ projectionId: string }> };

/** float32 N: per entity, the share of its 15 latent neighbours kept among its 15 map neighbours. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { projectionId } = await ctx.params;
  const { user } = await requireActor(request);
  return projectionStream(db, await requireProjectionAccess(db, user, projectionId, 'workspace.view'), 'fidelity');
});
