import { z } from 'zod';

// Client-safe (zod only): the cluster-proposal form and the route share these.

/** k-means settings: the range of k tried (the silhouette picks one), Lloyd iterations and restarts. */
export const kMeansParamsSchema = z
  .strictObject({
    kMin: z.number().int().min(2, 'kMin must be at least 2').max(50).default(2),
    kMax: z.number().int().min(2).max(50, 'kMax must be at most 50').default(10),
    maxIterations: z.number().int().min(1).max(1000).default(100),
    restarts: z.number().int().min(1).max(100).default(10),
  })
  .refine((p) => p.kMin <= p.kMax, { error: 'kMin must not exceed kMax', path: ['kMin'] });

/**
 * HDBSCAN settings (lib/projection/hdbscan.ts has the full meaning of each):
 * - minClusterSize: the smallest group reported as a cluster, 2 … number of entities (checked
 *   when requested), default 10. Larger: fewer, bigger clusters, small groups become noise;
 *   smaller: more, possibly spurious, small clusters. Common practice: about 1% of the entities.
 * - minSamples: neighbourhood of the density estimate, 1 … 200, default minClusterSize. Larger:
 *   smoother density, more points declared noise; smaller: fewer noise points, finer structure.
 */
export const hdbscanParamsSchema = z.strictObject({
  minClusterSize: z.number().int().min(2, 'minClusterSize must be at least 2').max(100_000, 'minClusterSize must be at most 100,000').default(10),
  minSamples: z.number().int().min(1, 'minSamples must be at least 1').max(200, 'minSamples must be at most 200').optional(),
});

export const CLUSTERING_METHODS = ['kmeans', 'hdbscan'] as const;
export type ClusteringMethod = (typeof CLUSTERING_METHODS)[number];


/** `POST /api/factor-sets/{id}/clusters`; params are checked against the method's own schema. */
export const clusteringRequestSchema = z.strictObject({
  method: z.enum(CLUSTERING_METHODS, { error: 'method is "kmeans" or "hdbscan"' }),
  params: z.record(z.string(), z.unknown()).optional(),
  seed: z.number().int().min(0).max(2 ** 31 - 1).default(42),
});
