/**
 * UMAP (lib/projection/umap.ts, umap-js on our exact graph from a PCA start) against R's uwot
 * 0.1.14 (Debian's r-cran-uwot) on the digits data scikit-learn ships, with the same settings
 * (n_neighbors 15, min_dist 0.1, spread 1, 500 epochs, PCA start, exact neighbours): the layouts
 * differ (different optimisers and random streams), so the check is on what the product reports,
 * trustworthiness at 15 — ours within 0.02 of uwot's mean over three seeds. uwot's layouts come from
 * tests/fixtures/projection/umap-uwot-digits.json, written by scripts/reference/umap.R; their
 * trustworthiness is computed here by fidelity.ts (itself equal to scikit-learn's to 5e-4 on
 * digits, fidelity-reference.test.ts).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { trustworthiness } from '@/lib/projection/fidelity';
import { runProjection } from '@/lib/projection/methods';
import { digitsData } from './pca-fixtures';

const fixture = z
  .object({
    uwot: z.string(),
    n: z.number().int(),
    runs: z.array(z.object({ seed: z.number(), seconds: z.number(), layout: z.array(z.number()) })),
  })
  .parse(JSON.parse(readFileSync(path.resolve(import.meta.dirname, '../../fixtures/projection/umap-uwot-digits.json'), 'utf8')));

describe(`UMAP on digits against R uwot ${fixture.uwot} (scripts/reference/umap.R)`, () => {
  it('trustworthiness at 15 within 0.02 of uwot’s (same neighbours, min_dist, epochs and start)', async () => {
    const { data, n, d } = digitsData();
    expect(n).toBe(fixture.n);
    const theirs = fixture.runs.map((run) => trustworthiness(data, n, d, Float32Array.from(run.layout), [15])[0] as number);
    const reference = theirs.reduce((sum, value) => sum + value, 0) / theirs.length;
    const ours = await runProjection({ data, n, d, method: 'umap', params: { nNeighbors: 15, minDist: 0.1, spread: 1, nEpochs: 500, init: 'pca' }, seed: 42 });
    const t = trustworthiness(data, n, d, ours.coordinates, [15])[0] as number;
    console.log(`digits T(15): ours ${t.toFixed(4)}, uwot ${theirs.map((value) => value.toFixed(4)).join(', ')} (mean ${reference.toFixed(4)})`);
    expect(Math.abs(t - reference)).toBeLessThanOrEqual(0.02);
  }, 120_000);
});
