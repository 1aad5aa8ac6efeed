/**
 * Loads tests/fixtures/projection/fidelity-reference.json, written by
 * scripts/reference/fidelity.py from scikit-learn and SciPy (Debian's python3-sklearn), so that the
 * tests need no Python. Inputs are float32 values (digits: integers), row-major.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { z } from 'zod';

const byK = z.object({ '5': z.number(), '15': z.number(), '50': z.number() });
const graph = z.object({ indices: z.array(z.number().int()), distances: z.array(z.number()) });

const caseSchema = z.object({
  name: z.string(),
  n: z.number().int(),
  d: z.number().int(),
  data: z.array(z.number()),
  embedding: z.array(z.number()),
  tiesLatent: z.boolean(),
  tiesMap: z.boolean(),
  trustworthiness: byK,
  continuity: byK,
  trustworthinessCosine: byK.optional(),
  knn: z.object({ k: z.number().int(), euclidean: graph, cosine: graph }).optional(),
  allPairs: z.object({ pairs: z.number().int(), shepardRho: z.number(), stress: z.number() }),
});

const fixtureSchema = z.object({
  source: z.string(),
  sklearn: z.string(),
  scipy: z.string(),
  cases: z.array(caseSchema),
});

export type ReferenceCase = z.infer<typeof caseSchema> & { latent: Float32Array; map: Float32Array };

const file = path.resolve(import.meta.dirname, '../../fixtures/projection/fidelity-reference.json');
const fixture = fixtureSchema.parse(JSON.parse(readFileSync(file, 'utf8')));

export const SKLEARN = `scikit-learn ${fixture.sklearn}`;
export const SCIPY = `scipy ${fixture.scipy}`;

export function referenceCase(name: string): ReferenceCase {
  const found = fixture.cases.find((entry) => entry.name === name);
  if (found === undefined) throw new Error(`fixture has no case ${name}`);
  return { ...found, latent: Float32Array.from(found.data), map: Float32Array.from(found.embedding) };
}

export const KS = [5, 15, 50] as const;
