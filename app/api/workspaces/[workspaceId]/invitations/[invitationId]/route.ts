import { db } from '@/db';
import { notFound } from '@/lib/api/errors';
import { apiRoute } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { uuidParam } from '@/lib/validation/common';
import { revokeInvitationAs } from '@/lib/workspaces/service';

type Ctx = { params: Promise<{ workspaceId: string; invitationId: string }> };

export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { workspaceId, invitationId } = await ctx.params;
  const { user } = await requireActor(request);
  if (!uuidParam.safeParse(invitationId).success) throw notFound('No such pending invitation');
  await revokeInvitationAs(db, user, workspaceId, invitationId);
  return new Response(null, { status: 204 });
});
