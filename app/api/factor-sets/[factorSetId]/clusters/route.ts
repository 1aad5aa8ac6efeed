import { db } from '@/db';
import { apiRoute, json, readJson } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { listClusteringsFor, requestClustering } from '@/lib/clusterings/service';
import { clusteringRequestSchema } from '@/lib/validation/clusterings';

type Ctx = { params: Promise<{ factorSetId: string }> };

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

/** `{items: [...]}`: the factor set's cluster proposals, newest first (labels via GET /api/clusterings/{id}). */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  return json({ items: await listClusteringsFor(db, user, factorSetId) });
});
