import { z } from 'zod';

export const PROJECTION_METHODS = ['pca', 'umap', 'sammon', 'tsne'] as const;

/** `POST /api/factor-sets/{id}/projections`; the params are checked against the method's own schema. */
export const projectionRequestSchema = z.strictObject({
  method: z.enum(PROJECTION_METHODS, { error: `method is one of ${PROJECTION_METHODS.join(', ')}` }),
  params: z.record(z.string(), z.unknown()).optional(),
  seed: z.number().int().min(0).max(2 ** 31 - 1).default(42),
});
export type ProjectionRequest = z.output<typeof projectionRequestSchema>;
