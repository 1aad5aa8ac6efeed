/**
 * Settings of the projection methods (lib/projection/params.ts through methods.ts): defaults,
 * refusals with readable messages, documentation for the form, and the library versions stored
 * with every projection.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  PARAM_DOCS,
  PROJECTION_LIBRARY_VERSIONS,
  PROJECTION_METHODS,
  ProjectionParamsError,
  parseProjectionParams,
  projectionParamsSchemas,
  runProjection,
} from '@/lib/projection/methods';
import { SAMMON_POINT_LIMIT } from '@/lib/projection/params';
import { SAMMON_DEFAULTS, SAMMON_MAX_POINTS } from '@/lib/projection/sammon';
import { DRUID_REPORTED_VERSION, DRUID_VERSION } from '@/lib/projection/tsne';
import { UMAP_JS_VERSION } from '@/lib/projection/umap';
import { gaussianMixture } from './methods-fixtures';

function refusal(run: () => unknown): ProjectionParamsError {
  try {
    run();
  } catch (error) {
    if (error instanceof ProjectionParamsError) return error;
    throw error;
  }
  throw new Error('expected the settings to be refused');
}

describe('projection settings', () => {
  it('fill every default, UMAP epochs by n as umap-learn (500 up to 10,000 points, 200 beyond)', () => {
    expect(parseProjectionParams('pca', undefined, 100)).toEqual({ standardise: false, metric: 'euclidean' });
    expect(parseProjectionParams('umap', {}, 300)).toEqual({ nNeighbors: 15, minDist: 0.1, spread: 1, nEpochs: 500, metric: 'euclidean', init: 'pca' });
    expect(parseProjectionParams('umap', {}, 10_000).nEpochs).toBe(500);
    expect(parseProjectionParams('umap', {}, 10_001).nEpochs).toBe(200);
    expect(parseProjectionParams('umap', { nEpochs: 50, metric: 'cosine' }, 20_000)).toMatchObject({ nEpochs: 50, metric: 'cosine' });
    expect(parseProjectionParams('sammon', null, 300)).toEqual({ maxIterations: 100, tolerance: 1e-4, metric: 'euclidean' });
    expect(parseProjectionParams('tsne', {}, 300)).toEqual({ perplexity: 30, iterations: 1000, learningRate: 10, init: 'random', metric: 'euclidean' });
  });

  it.each([
    ['umap', { nNeighbors: 1 }, /nNeighbors must be at least 2/],
    ['umap', { nNeighbors: 201 }, /nNeighbors must be at most 200/],
    ['umap', { nNeighbors: 7.5 }, /nNeighbors must be a whole number from 2 to 200/],
    ['umap', { nNeighbors: '15' }, /nNeighbors must be a number/],
    ['umap', { minDist: -0.1 }, /minDist must be at least 0/],
    ['umap', { minDist: 1.5 }, /minDist must be at most 1/],
    ['umap', { spread: 0.4 }, /spread must be at least 0.5/],
    ['umap', { spread: 0.5, minDist: 0.8 }, /minDist must not exceed spread/],
    ['umap', { nEpochs: 5 }, /nEpochs must be at least 10/],
    ['umap', { nEpochs: 2001 }, /nEpochs must be at most 2000/],
    ['umap', { metric: 'manhattan' }, /metric must be "euclidean" or "cosine"/],
    ['umap', { init: 'spectral' }, /init must be "pca" or "random"/],
    ['umap', { n_neighbors: 15 }, /unknown setting "n_neighbors"/],
    ['pca', { metric: 'cosine' }, /only "euclidean" is offered for PCA; cosine distances are offered for UMAP/],
    ['pca', { standardise: 'yes' }, /standardise must be true or false/],
    ['sammon', { metric: 'cosine' }, /only "euclidean" is offered for Sammon mapping/],
    ['sammon', { maxIterations: 0 }, /maxIterations must be at least 1/],
    ['sammon', { tolerance: -1 }, /tolerance must be at least 0/],
    ['tsne', { metric: 'cosine' }, /only "euclidean" is offered for t-SNE/],
    ['tsne', { perplexity: 4 }, /perplexity must be at least 5/],
    ['tsne', { perplexity: 101 }, /perplexity must be at most 100/],
    ['tsne', { iterations: 100 }, /iterations must be at least 250/],
    ['tsne', { iterations: 6000 }, /iterations must be at most 5000/],
  ] as const)('%s %o is refused: %s', (method, params, message) => {
    const error = refusal(() => parseProjectionParams(method, params, 300));
    expect(error).toBeInstanceOf(RangeError);
    expect(error.message).toMatch(message);
    expect(error.message.startsWith(`${method} settings: `)).toBe(true);
    // The same schema refuses it in a form (no n needed).
    expect(projectionParamsSchemas[method].safeParse(params).success).toBe(false);
  });

  it('refuses settings that do not fit the number of points, naming the bound', () => {
    // Rtsne's rule (3·perplexity < n − 1): 60 points allow perplexity < 19.67.
    expect(() => parseProjectionParams('tsne', {}, 60)).toThrow(/perplexity must be less than \(n − 1\)\/3 = 19\.67 for 60 points, got 30/);
    expect(parseProjectionParams('tsne', { perplexity: 19 }, 60).perplexity).toBe(19);
    expect(() => parseProjectionParams('umap', { nNeighbors: 20 }, 20)).toThrow(/nNeighbors must be at most n − 1 = 19 for 20 points/);
    expect(() => parseProjectionParams('sammon', {}, 5001)).toThrow(/at most 5000 points/);
    expect(() => parseProjectionParams('tsne', { perplexity: 5 }, 5001)).toThrow(/t-SNE takes at most 5000 points/);
  });

  it('lists every problem at once, each with its setting', () => {
    const error = refusal(() => parseProjectionParams('umap', { nNeighbors: 0, minDist: 2, extra: 1 }, 300));
    expect(error.issues.map((issue) => issue.path).sort()).toEqual(['', 'minDist', 'nNeighbors']);
    expect(error.message).toContain('nNeighbors must be at least 2');
    expect(error.message).toContain('minDist must be at most 1');
    expect(error.message).toContain('unknown setting "extra"');
  });

  it('refuses an unknown method and bad settings before touching the data', async () => {
    const { data, n, d } = gaussianMixture(1, 2, 10, 3);
    expect(() => parseProjectionParams('isomap' as 'pca', {}, n)).toThrow(/unknown method "isomap"; expected one of pca, umap, sammon, tsne/);
    // Bad data would raise a RangeError naming the value; the settings are checked first.
    data[0] = Number.NaN;
    await expect(runProjection({ data, n, d, method: 'umap', params: { nNeighbors: 500 }, seed: 1 })).rejects.toBeInstanceOf(ProjectionParamsError);
    await expect(runProjection({ data, n, d, method: 'pca', params: {}, seed: 1 })).rejects.toThrow(/row 0, column 0 is NaN/);
  });

  it('documents every setting (label and help) in PARAM_DOCS and on the schema itself', () => {
    for (const method of PROJECTION_METHODS) {
      const shape = projectionParamsSchemas[method].shape;
      const docs: Record<string, { label: string; help: string }> = PARAM_DOCS[method];
      expect(Object.keys(docs).sort()).toEqual(Object.keys(shape).sort());
      for (const [key, field] of Object.entries(shape)) {
        const doc = docs[key];
        expect(doc?.label.length, `${method}.${key} label`).toBeGreaterThan(3);
        expect(doc?.help.length, `${method}.${key} help`).toBeGreaterThan(40);
        expect(field.description, `${method}.${key} description`).toBeTruthy();
      }
    }
  });

  it('repeats sammon.ts\'s limits and defaults exactly (params.ts must not import it: the form is a client component)', () => {
    expect(SAMMON_POINT_LIMIT).toBe(SAMMON_MAX_POINTS);
    expect(parseProjectionParams('sammon', {}, 10)).toMatchObject({ maxIterations: SAMMON_DEFAULTS.maxIterations, tolerance: SAMMON_DEFAULTS.tolerance });
  });

  it('stores the versions of the libraries actually installed', () => {
    const version = (name: string) => (JSON.parse(readFileSync(path.join('node_modules', name, 'package.json'), 'utf8')) as { version: string }).version;
    expect(version('umap-js')).toBe(UMAP_JS_VERSION);
    expect(version('@saehrimnir/druidjs')).toBe(DRUID_VERSION);
    expect(DRUID_REPORTED_VERSION).toBe(DRUID_VERSION);
    expect(PROJECTION_LIBRARY_VERSIONS).toEqual({ pca: 'asterism pca', umap: 'asterism umap-batch 2 (Adam, per-vertex streams, polynomial powers; umap-js 1.4.0 graph and gradients)', sammon: 'asterism sammon', tsne: '@saehrimnir/druidjs 0.9.0' });
  });
});
