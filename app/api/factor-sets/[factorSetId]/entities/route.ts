import { db } from '@/db';
import { apiRoute, json, validated } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { type EntitySort, listEntities } from '@/lib/factor-sets/factor-sets';
import { entityQuerySchema } from '@/lib/validation/factor-sets';

type Ctx = { params: Promise<{ factorSetId: string }> };

/** `?page=1&pageSize=50&sort=label&dir=asc&q=coast` → `{items:[{id,label,metadata,...}], total, page, pageSize}`. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  await requireFactorSetAccess(db, user.id, factorSetId, 'workspace.view');
  const q = validated(entityQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  const page = await listEntities(db, factorSetId, {
    offset: (q.page - 1) * q.pageSize,
    limit: q.pageSize,
    sort: q.sort as EntitySort,
    descending: q.dir === 'desc',
    search: q.q || undefined,
  });
  return json({ ...page, page: q.page, pageSize: q.pageSize });
});
