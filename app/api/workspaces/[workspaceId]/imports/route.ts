import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { stageForPreview } from '@/lib/factor-sets/import-flow';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ workspaceId: string }> };

/** Uploads and parses without storing: answers the parse report and an id to confirm within the hour. */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  return json(await stageForPreview(db, user, workspaceId, request));
});
