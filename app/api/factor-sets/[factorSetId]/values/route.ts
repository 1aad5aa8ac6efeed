import { z } from 'zod';
import { db } from '@/db';
import { ApiError } from '@/lib/api/errors';
import { apiRoute, validated } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { binaryStream, csvStream } from '@/lib/factor-sets/export';

export const runtime = 'nodejs';
type Ctx = { params: Promise<{ factorSetId: string }> };

const querySchema = z.object({
  format: z.enum(['binary', 'csv']).default('binary'),
  /** values: the (aligned mean) factors; sd: posterior standard deviations, for factor sets with draws. */
  kind: z.enum(['values', 'sd']).default('values'),
});

/** N×K float32 little-endian, row-major, with X-Rows and X-Dims; `?format=csv` for text with ids. */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  const { factorSet } = await requireFactorSetAccess(db, user.id, factorSetId, 'workspace.view');
  const query = validated(querySchema, Object.fromEntries(new URL(request.url).searchParams));
  if (query.kind === 'sd' && factorSet.draws === 0) {
    throw new ApiError(404, 'not_found', 'This factor set has no posterior draws, so no standard deviations');
  }
  const headers = {
    'X-Rows': String(factorSet.rows),
    'X-Dims': String(factorSet.dims),
    'Cache-Control': 'private, no-store',
  };
  if (query.format === 'csv') {
    return new Response(csvStream(db, factorSet.id, query.kind, factorSet.dims), {
      headers: { ...headers, 'Content-Type': 'text/csv; charset=utf-8', 'Content-Disposition': `attachment; filename="${factorSet.id}-${query.kind}.csv"` },
    });
  }
  return new Response(binaryStream(db, factorSet.id, query.kind), {
    headers: { ...headers, 'Content-Type': 'application/octet-stream', 'Content-Length': String(factorSet.rows * factorSet.dims * 4) },
  });
});
