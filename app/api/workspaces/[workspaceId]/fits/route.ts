import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { listFitsAs, submitFitUpload } from '@/lib/fits/service';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ workspaceId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  return json({ items: await listFitsAs(db, user, workspaceId) });
});

/**
 * Multipart: `file` (the long table), `settings` (JSON, lib/fit/settings.ts) and optional `name`.
 * The table is read and checked before the fit is queued, so bad input is answered here.
 */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  const fit = await submitFitUpload(db, user, workspaceId, request);
  return json({ id: fit.id, status: fit.status, observations: fit.observations, rowEntities: fit.rowEntities, columnEntities: fit.columnEntities, warnings: fit.warnings }, 202);
});
