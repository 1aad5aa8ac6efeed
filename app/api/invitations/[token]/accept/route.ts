import { db } from '@/db';
import { apiRoute, json } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { hashSecret } from '@/lib/auth/secrets';
import { acceptInvitation } from '@/lib/workspaces/workspaces';

type Ctx = { params: Promise<{ token: string }> };

/** The invited person (signed in with the invited address) joins the workspace. */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { token } = await ctx.params;
  const { user } = await requireActor(request);
  return json(await acceptInvitation(db, hashSecret(token), user.id));
});
