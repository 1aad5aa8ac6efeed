import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { updateViewSchema } from '@/lib/validation/views';
import { deleteViewAs, getViewFor, updateViewAs } from '@/lib/views/service';

type Ctx = { params: Promise<{ viewId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { viewId } = await ctx.params;
  const { user } = await requireActor(request);
  return json(await getViewFor(db, user, viewId));
});

export const PATCH = apiRoute(async (request, ctx: Ctx) => {
  const { viewId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, updateViewSchema, 1024 * 1024);
  return json(await updateViewAs(db, user, viewId, input));
});

export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { viewId } = await ctx.params;
  const { user } = await requireActor(request);
  await deleteViewAs(db, user, viewId);
  return new Response(null, { status: 204 });
});
