import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { predictWithFit } from '@/lib/fits/service';
import { predictRequestSchema } from '@/lib/fits/validation';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ fitId: string }> };

/** 10,000 pairs with covariates fit in well under 2 MB of JSON. */
const MAX_BODY_BYTES = 2 * 1024 * 1024;

export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { fitId } = await ctx.params;
  const { user } = await requireActor(request);
  const body = await readJson(request, predictRequestSchema, MAX_BODY_BYTES);
  return json(await predictWithFit(db, user, fitId, body));
});
