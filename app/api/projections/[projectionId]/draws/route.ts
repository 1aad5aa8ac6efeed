import { z } from 'zod';
import { db } from '@/db';
import { apiRoute, json, validated } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requireProjectionAccess } from '@/lib/projections/service';
import { drawCloud } from '@/lib/uncertainty/draw-cloud';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ projectionId: string }> };

const querySchema = z.strictObject({ entity: z.string().min(1, 'entity is the id of an entity').max(500) });

/** `?entity=ID` → the entity's posterior draws placed on this map, with their 2-SD ellipse. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { projectionId } = await ctx.params;
  const { user } = await requireActor(request);
  const projection = await requireProjectionAccess(db, user, projectionId, 'workspace.view');
  const query = validated(querySchema, Object.fromEntries(new URL(request.url).searchParams));
  return json(await drawCloud(db, projection, query.entity));
});
