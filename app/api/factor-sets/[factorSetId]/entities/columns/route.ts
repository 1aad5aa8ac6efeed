import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { entityColumns } from '@/lib/factor-sets/entity-columns';

type Ctx = { params: Promise<{ factorSetId: string }> };

/** `{count, ids, labels, spread, columns}` in entity order: the map's hover, search, colour and filter data. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  const { factorSet } = await requireFactorSetAccess(db, user.id, factorSetId, 'workspace.view');
  // Entities never change after import, so the browser may keep this for the session.
  return json(await entityColumns(db, factorSet), { headers: { 'Cache-Control': 'private, max-age=3600' } });
});
