import { db } from '@/db';
import { ApiError } from '@/lib/api/errors';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { checkPasswordSignIn } from '@/lib/auth/password-sign-in';
import { clientAddress } from '@/lib/auth/rate-limit';
import { serverEnv } from '@/lib/env';
import { createAccessToken, listAccessTokens } from '@/lib/tokens/access-tokens';
import { createTokenWithPasswordSchema } from '@/lib/validation/tokens';

export const GET = apiRoute(async (request) => {
  const { user } = await requireActor(request);
  return json({ items: await listAccessTokens(db, user.id) });
});

/** Scripts trade an e-mail and password for a token; failures count towards the sign-in limit. */
export const POST = apiRoute(async (request) => {
  const input = await readJson(request, createTokenWithPasswordSchema);
  const env = serverEnv();
  const result = await checkPasswordSignIn(
    db,
    { email: input.email, password: input.password, address: clientAddress(request.headers) },
    {
      maxPerAccount: env.SIGN_IN_MAX_FAILURES_PER_ACCOUNT,
      maxPerAddress: env.SIGN_IN_MAX_FAILURES_PER_ADDRESS,
      windowMinutes: env.SIGN_IN_FAILURE_WINDOW_MINUTES,
    },
  );
  if (!result.ok) {
    if (result.reason === 'rate_limited') {
      throw new ApiError(429, 'rate_limited', 'Too many failed sign-ins; wait a few minutes and try again');
    }
    throw new ApiError(401, 'invalid_credentials', 'E-mail or password is wrong');
  }
  const { token, accessToken } = await createAccessToken(db, result.user.id, input.name);
  return json({ token, id: accessToken.id, name: accessToken.name, prefix: accessToken.prefix, createdAt: accessToken.createdAt }, 201);
});
