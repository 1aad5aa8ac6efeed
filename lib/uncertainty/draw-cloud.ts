import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, notFound } from '@/lib/api/errors';
import { floatsOf, readMatrix } from '@/lib/factor-sets/blocks';
import { findFactorSet } from '@/lib/factor-sets/factor-sets';
import { mulberry32 } from '@/lib/align/random';
import { fitPca, transformPca } from '@/lib/projection/pca';
import { curveParameters, transformUmap } from '@/lib/projection/umap-kernel';
import { readProjectionBlocks } from '@/lib/projections/projections';
import type { Projection } from '@/lib/projections/projections';

/**
 * Where an entity's posterior draws land on a map.
 * - `linear` (PCA): each draw through the projection's own loadings — exact.
 * - `transform` (UMAP): each draw placed by UMAP's own transform against the fixed layout
 *   (lib/projection/umap-kernel.ts transformUmap), with the projection's settings.
 * - `neighbours` (t-SNE, Sammon): those layouts have no transform, so each draw is
 *   placed at the inverse-distance-weighted mean of the map positions of its `NEIGHBOURS` nearest
 *   entities in latent space — the usual out-of-sample approximation (and the start that UMAP's own
 *   transform refines). It shows how far a draw wanders among its neighbours, not a re-run layout.
 */
export interface DrawCloud {
  entity: { index: number; id: string };
  placement: 'linear' | 'transform' | 'neighbours';
  draws: number;
  /** draws × 2 map coordinates, row-major. */
  points: number[];
  /** The draws' 2-D covariance as an ellipse of two standard deviations (≈ 86% of a Gaussian cloud). */
  ellipse: { cx: number; cy: number; rx: number; ry: number; angle: number };
}

/** Neighbours per draw for the `neighbours` placement; 10 smooths single-neighbour jumps (rule of thumb). */
const NEIGHBOURS = 10;

async function entityDraws(db: Kysely<Database>, factorSetId: string, index: number, draws: number, dims: number): Promise<Float32Array> {
  const block = await db
    .selectFrom('factor_set_blocks')
    .select(['row_start', 'data'])
    .where('factor_set_id', '=', factorSetId)
    .where('kind', '=', 'draws')
    .where('row_start', '<=', index)
    .orderBy('row_start', 'desc')
    .limit(1)
    .executeTakeFirst();
  if (!block) throw notFound('This factor set has no stored draws');
  const per = draws * dims;
  const offset = (index - block.row_start) * per;
  return floatsOf(block.data).slice(offset, offset + per);
}

export function ellipseOf(points: Float64Array | Float32Array | number[]): DrawCloud['ellipse'] {
  const m = points.length / 2;
  let cx = 0;
  let cy = 0;
  for (let i = 0; i < m; i += 1) {
    cx += Number(points[2 * i]);
    cy += Number(points[2 * i + 1]);
  }
  cx /= m;
  cy /= m;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (let i = 0; i < m; i += 1) {
    const dx = Number(points[2 * i]) - cx;
    const dy = Number(points[2 * i + 1]) - cy;
    sxx += dx * dx;
    syy += dy * dy;
    sxy += dx * dy;
  }
  const div = Math.max(1, m - 1);
  sxx /= div;
  syy /= div;
  sxy /= div;
  // Eigen-decomposition of the symmetric 2 × 2 covariance in closed form.
  const mean = (sxx + syy) / 2;
  const radius = Math.sqrt(((sxx - syy) / 2) ** 2 + sxy ** 2);
  const l1 = mean + radius;
  const l2 = Math.max(0, mean - radius);
  const angle = 0.5 * Math.atan2(2 * sxy, sxx - syy);
  return { cx, cy, rx: 2 * Math.sqrt(l1), ry: 2 * Math.sqrt(l2), angle };
}

/** The k nearest latent rows of each query row (exact scan; q is a few hundred draws), nearest first. */
export function nearestRows(queries: Float32Array, q: number, latent: Float32Array, n: number, d: number, k: number, metric: 'euclidean' | 'cosine'): { indices: Int32Array; distances: Float32Array } {
  const indices = new Int32Array(q * k).fill(-1);
  const distances = new Float32Array(q * k).fill(Infinity);
  const norms = new Float64Array(n);
  if (metric === 'cosine') {
    for (let i = 0; i < n; i += 1) {
      let s = 0;
      for (let c = 0; c < d; c += 1) s += (latent[i * d + c] as number) ** 2;
      norms[i] = Math.sqrt(s);
    }
  }
  const best = new Float64Array(k);
  const bestIndex = new Int32Array(k);
  for (let r = 0; r < q; r += 1) {
    best.fill(Infinity);
    bestIndex.fill(-1);
    let qNorm = 0;
    if (metric === 'cosine') for (let c = 0; c < d; c += 1) qNorm += (queries[r * d + c] as number) ** 2;
    qNorm = Math.sqrt(qNorm);
    for (let i = 0; i < n; i += 1) {
      let value: number;
      if (metric === 'cosine') {
        let dot = 0;
        for (let c = 0; c < d; c += 1) dot += (queries[r * d + c] as number) * (latent[i * d + c] as number);
        value = 1 - dot / (qNorm * (norms[i] as number) || 1);
      } else {
        let s = 0;
        for (let c = 0; c < d; c += 1) {
          const diff = (queries[r * d + c] as number) - (latent[i * d + c] as number);
          s += diff * diff;
        }
        value = Math.sqrt(s);
      }
      if (value >= (best[k - 1] as number)) continue;
      let at = k - 1;
      while (at > 0 && (best[at - 1] as number) > value) {
        best[at] = best[at - 1] as number;
        bestIndex[at] = bestIndex[at - 1] as number;
        at -= 1;
      }
      best[at] = value;
      bestIndex[at] = i;
    }
    for (let s = 0; s < k; s += 1) {
      indices[r * k + s] = bestIndex[s] as number;
      distances[r * k + s] = best[s] as number;
    }
  }
  return { indices, distances };
}

/** Inverse-distance-weighted map position of each query row among its nearest latent rows. */
export function placeByNeighbours(queries: Float32Array, q: number, latent: Float32Array, n: number, d: number, coords: Float32Array, k = NEIGHBOURS): Float64Array {
  const near = nearestRows(queries, q, latent, n, d, Math.min(k, n), 'euclidean');
  const kk = Math.min(k, n);
  const out = new Float64Array(q * 2);
  for (let r = 0; r < q; r += 1) {
    let wx = 0;
    let wy = 0;
    let wt = 0;
    for (let s = 0; s < kk; s += 1) {
      const i = near.indices[r * kk + s] as number;
      if (i < 0) continue;
      const w = 1 / ((near.distances[r * kk + s] as number) + 1e-9);
      wx += w * (coords[2 * i] as number);
      wy += w * (coords[2 * i + 1] as number);
      wt += w;
    }
    out[2 * r] = wx / wt;
    out[2 * r + 1] = wy / wt;
  }
  return out;
}

async function projectionCoords(db: Kysely<Database>, projectionId: string, n: number): Promise<Float32Array> {
  const coords = new Float32Array(n * 2);
  let at = 0;
  for await (const block of readProjectionBlocks(db, projectionId, 'coords')) {
    const floats = floatsOf(block);
    coords.set(floats, at);
    at += floats.length;
  }
  return coords;
}

export async function drawCloud(db: Kysely<Database>, projection: Projection, entityId: string): Promise<DrawCloud> {
  if (projection.status !== 'done') throw new ApiError(409, 'projection_not_ready', 'The projection has not finished');
  const factorSet = await findFactorSet(db, projection.factorSetId);
  if (!factorSet) throw notFound('Factor set not found');
  if (factorSet.draws === 0) throw new ApiError(400, 'no_draws', 'This factor set holds point estimates only: there are no draws to show');
  const entity = await db
    .selectFrom('factor_set_entities')
    .select(['idx', 'entity_id'])
    .where('factor_set_id', '=', factorSet.id)
    .where('entity_id', '=', entityId)
    .executeTakeFirst();
  if (!entity) throw notFound(`No entity "${entityId}" in this factor set`);
  const { rows: n, dims: d, draws } = factorSet;
  const [latent, samples] = await Promise.all([readMatrix(db, factorSet.id, 'values', n, d), entityDraws(db, factorSet.id, entity.idx, draws, d)]);
  let points: Float64Array;
  let placement: DrawCloud['placement'];
  if (projection.method === 'pca') {
    const model = fitPca(latent, n, d, { components: Math.min(2, d), standardise: projection.params.standardise === true });
    const scores = transformPca(model, samples, draws);
    points = new Float64Array(draws * 2);
    for (let r = 0; r < draws; r += 1) {
      points[2 * r] = scores[r * model.nComponents] as number;
      points[2 * r + 1] = model.nComponents > 1 ? (scores[r * model.nComponents + 1] as number) : 0;
    }
    placement = 'linear';
  } else if (projection.method === 'umap') {
    const coords = await projectionCoords(db, projection.id, n);
    const params = projection.params;
    const nNeighbors = Math.min(typeof params.nNeighbors === 'number' ? params.nNeighbors : 15, n);
    const metric = params.metric === 'cosine' ? 'cosine' : 'euclidean';
    const { a, b } = curveParameters(typeof params.minDist === 'number' ? params.minDist : 0.1, typeof params.spread === 'number' ? params.spread : 1);
    const fitEpochs = typeof params.nEpochs === 'number' ? params.nEpochs : 200;
    const near = nearestRows(samples, draws, latent, n, d, nNeighbors - 1, metric);
    points = transformUmap(coords, { q: draws, ...near }, { a, b, nNeighbors, nEpochs: Math.max(30, Math.round(fitEpochs / 3)), random: mulberry32((projection.seed ^ entity.idx) >>> 0) });
    placement = 'transform';
  } else {
    points = placeByNeighbours(samples, draws, latent, n, d, await projectionCoords(db, projection.id, n));
    placement = 'neighbours';
  }
  return { entity: { index: entity.idx, id: entity.entity_id }, placement, draws, points: Array.from(points), ellipse: ellipseOf(points) };
}
