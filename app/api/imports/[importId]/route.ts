import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { confirmStaged, discardOwnStaged } from '@/lib/factor-sets/import-flow';
import { confirmImportSchema } from '@/lib/validation/factor-sets';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ importId: string }> };

/** Confirms a previewed upload: stores it as a factor set. */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { importId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, confirmImportSchema);
  const { factorSet, partner, warnings } = await confirmStaged(db, user, importId, input.name);
  return json({ id: factorSet.id, name: factorSet.name, rows: factorSet.rows, dims: factorSet.dims, draws: factorSet.draws, warnings, partnerId: partner?.id ?? null }, 201);
});

export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { importId } = await ctx.params;
  const { user } = await requireActor(request);
  await discardOwnStaged(user, importId);
  return new Response(null, { status: 204 });
});
