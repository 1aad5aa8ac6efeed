import { db } from '@/db';
import { apiRoute } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { projectionStream } from '@/lib/projections/export';
import { requireProjectionAccess } from '@/lib/projections/service';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ projectionId: string }> };

/** float32 little-endian N×2, in entity order. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { projectionId } = await ctx.params;
  const { user } = await requireActor(request);
  return projectionStream(db, await requireProjectionAccess(db, user, projectionId, 'workspace.view'), 'coords');
});
