import { z } from 'zod';
import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requestClustering } from '@/lib/clusterings/service';

type Ctx = { params: Promise<{ factorSetId: string }> };

const clusteringRequestSchema = z.strictObject({
  method: z.enum(['kmeans', 'hdbscan'], { error: 'method is "kmeans" or "hdbscan"' }),
  params: z.record(z.string(), z.unknown()).optional(),
  seed: z.number().int().min(0).max(2 ** 31 - 1).default(42),
});

/**
 * `{method: "kmeans", params: {kMin, kMax, maxIterations, restarts}, seed}` or
 * `{method: "hdbscan", params: {minClusterSize, minSamples}, seed}` → 202 `{id, status}`: cluster
 * proposals in the full latent space.
 */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, clusteringRequestSchema);
  const { clustering, existing } = await requestClustering(db, user, factorSetId, input);
  return json({ id: clustering.id, status: clustering.status, existing }, existing ? 200 : 202);
});
