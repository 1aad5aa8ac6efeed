import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { rememberProjectionSettings } from '@/lib/factor-sets/preferences';
import { listProjections } from '@/lib/projections/projections';
import { requestProjection } from '@/lib/projections/service';
import { projectionRequestSchema } from '@/lib/validation/projections';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ factorSetId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  await requireFactorSetAccess(db, user.id, factorSetId, 'workspace.view');
  return json({ items: await listProjections(db, factorSetId) });
});

/** `{method, params, seed}` → 202 `{id, status}`; an identical earlier request's projection when there is one. */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, projectionRequestSchema);
  const { projection, existing } = await requestProjection(db, user, factorSetId, input);
  // Offered as the next form's defaults, for everyone in the workspace.
  await rememberProjectionSettings(db, factorSetId, user.id, input);
  return json({ id: projection.id, status: projection.status, existing }, existing ? 200 : 202);
});
