import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { createViewSchema } from '@/lib/validation/views';
import { createViewAs, listViewsFor } from '@/lib/views/service';

type Ctx = { params: Promise<{ workspaceId: string }> };

/** Saved views of the workspace, newest first: `{items: [...]}`; every member reads. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  return json({ items: await listViewsFor(db, user, workspaceId) });
});

/** `{name, state}` → 201 the view (owner and presenter save views). */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, createViewSchema, 1024 * 1024);
  return json(await createViewAs(db, user, workspaceId, input), 201);
});
