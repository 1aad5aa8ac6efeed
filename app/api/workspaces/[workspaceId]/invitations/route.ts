import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { inviteSchema } from '@/lib/validation/workspaces';
import { inviteAs, listInvitationsAs } from '@/lib/workspaces/service';

type Ctx = { params: Promise<{ workspaceId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  return json({ items: await listInvitationsAs(db, user, workspaceId) });
});

/** Mails an accept link that expires after INVITATION_TTL_DAYS (7 by default). */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, inviteSchema);
  return json(await inviteAs(db, user, workspaceId, input), 201);
});
