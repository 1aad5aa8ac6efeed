import { db } from '@/db';
import { annotationHistoryFor } from '@/lib/annotations/service';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';

type Ctx = { params: Promise<{ annotationId: string }> };

/** Every change, newest first: `{items: [{version, action, changes, actor, at}]}`; kept after a delete. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { annotationId } = await ctx.params;
  const { user } = await requireActor(request);
  return json({ items: await annotationHistoryFor(db, user, annotationId) });
});
