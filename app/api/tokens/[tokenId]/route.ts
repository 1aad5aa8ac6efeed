import { db } from '@/db';
import { notFound } from '@/lib/api/errors';
import { apiRoute } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { revokeAccessToken } from '@/lib/tokens/access-tokens';
import { uuidParam } from '@/lib/validation/common';

type Ctx = { params: Promise<{ tokenId: string }> };

/** Revokes one of the caller's own tokens (a token may revoke itself). */
export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { tokenId } = await ctx.params;
  const { user } = await requireActor(request);
  if (!uuidParam.safeParse(tokenId).success || !(await revokeAccessToken(db, user.id, tokenId))) {
    throw notFound('No such active token');
  }
  return new Response(null, { status: 204 });
});
