import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { listFactorSets } from '@/lib/factor-sets/factor-sets';
import { importInOneStep } from '@/lib/factor-sets/import-flow';
import { requireWorkspaceAccess } from '@/lib/workspaces/access';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ workspaceId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  await requireWorkspaceAccess(db, user.id, workspaceId, 'workspace.view');
  return json({ items: await listFactorSets(db, workspaceId) });
});

/** Multipart: `file`, optional `labels`, `name`, `format`, `options` (JSON). Stores at once. */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  const { factorSet, partner, warnings } = await importInOneStep(db, user, workspaceId, request);
  return json(
    {
      id: factorSet.id,
      name: factorSet.name,
      rows: factorSet.rows,
      dims: factorSet.dims,
      draws: factorSet.draws,
      warnings,
      ...(partner ? { partner: { id: partner.id, name: partner.name, rows: partner.rows, dims: partner.dims } } : {}),
    },
    201,
  );
});
