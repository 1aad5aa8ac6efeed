import { notFound } from '@/lib/api/errors';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { cachedNeighbourRow } from '@/lib/projections/knn-cache';
import type { DbOrTx } from '@/lib/users/users';
import { readMatrix, readMatrixRow } from './blocks';
import { type FactorSet, findFactorSet } from './factor-sets';

export interface NeighbourItem {
  /** Row index in entity order, as the coordinates endpoint lists points. */
  index: number;
  id: string;
  label: string | null;
  distance: number;
  /** Cosine similarity (1 − cosine distance); for Euclidean, null. */
  similarity: number | null;
}

export interface NeighboursAnswer {
  entity: { index: number; id: string; label: string | null };
  metric: 'euclidean' | 'cosine';
  items: NeighbourItem[];
  /**
   * Where the neighbours come from: the factor set's cached exact graph, its cached approximate
   * graph (NN-descent, recall ≥ 0.95 at k = 15: a true neighbour can be missing), or an exact
   * search of this one entity against all (when no cached graph holds k neighbours).
   */
  source: 'exact graph' | 'approximate graph' | 'exact search';
  /** For a factor set with a joint partner: the partner's entities with the highest γ_i·δ_j. */
  partner: { factorSetId: string; name: string; items: { id: string; label: string | null; affinity: number }[] } | null;
}

/** The k largest (or smallest) scores by a bounded insertion into a sorted list: k is small. */
function topK(scores: Float64Array, k: number, largest: boolean, skip: number): number[] {
  const best: number[] = [];
  for (let j = 0; j < scores.length; j += 1) {
    if (j === skip) continue;
    const s = scores[j] ?? Number.NaN;
    const better = (a: number, b: number) => (largest ? a > b : a < b);
    if (best.length === k && !better(s, scores[best[k - 1] ?? 0] ?? 0)) continue;
    let at = best.length;
    while (at > 0 && better(s, scores[best[at - 1] ?? 0] ?? 0)) at -= 1;
    best.splice(at, 0, j);
    if (best.length > k) best.pop();
  }
  return best;
}

/** Distances from row q to every row (Euclidean, or cosine distance 1 − cos θ). */
function exactDistancesFrom(values: Float32Array, n: number, d: number, q: number, metric: 'euclidean' | 'cosine'): Float64Array {
  const norm = (i: number) => {
    let s = 0;
    for (let c = 0; c < d; c += 1) s += (values[i * d + c] ?? 0) ** 2;
    return Math.sqrt(s);
  };
  const qNorm = norm(q);
  const distances = new Float64Array(n);
  for (let i = 0; i < n; i += 1) {
    let dot = 0;
    let sq = 0;
    for (let c = 0; c < d; c += 1) {
      const a = values[q * d + c] ?? 0;
      const b = values[i * d + c] ?? 0;
      dot += a * b;
      sq += (a - b) ** 2;
    }
    distances[i] = metric === 'cosine' ? 1 - dot / (qNorm * norm(i) || 1) : Math.sqrt(sq);
  }
  return distances;
}

async function entityRow(db: DbOrTx, factorSetId: string, entityId: string) {
  return db
    .selectFrom('factor_set_entities')
    .select(['idx', 'entity_id', 'label'])
    .where('factor_set_id', '=', factorSetId)
    .where('entity_id', '=', entityId)
    .executeTakeFirst();
}

async function labelsFor(db: DbOrTx, factorSetId: string, indices: number[]): Promise<Map<number, { id: string; label: string | null }>> {
  if (indices.length === 0) return new Map();
  const rows = await db
    .selectFrom('factor_set_entities')
    .select(['idx', 'entity_id', 'label'])
    .where('factor_set_id', '=', factorSetId)
    .where('idx', 'in', indices)
    .execute();
  return new Map(rows.map((r) => [r.idx, { id: r.entity_id, label: r.label }]));
}

/**
 * An entity's k nearest neighbours in the full latent space, so the map can show when a 2-D
 * neighbour is not a latent one: from the factor set's cached neighbour graph
 * (lib/projections/knn-cache.ts, one row read) when it holds k neighbours in this metric, else by
 * one exact pass over the matrix (O(N·K) per query).
 */
export async function latentNeighbours(
  db: Kysely<Database>,
  factorSet: FactorSet,
  entityId: string,
  k: number,
  metric: 'euclidean' | 'cosine',
): Promise<NeighboursAnswer> {
  const entity = await entityRow(db, factorSet.id, entityId);
  if (!entity) throw notFound(`No entity "${entityId}" in this factor set`);
  const { rows: n, dims: d } = factorSet;
  const q = entity.idx;
  const wanted = Math.min(k, n - 1);
  const partnerSet = factorSet.jointPartnerId ? await findFactorSet(db, factorSet.jointPartnerId) : undefined;
  const withPartner = partnerSet !== undefined && partnerSet.dims === d;
  const cached = await cachedNeighbourRow(db, factorSet, q, metric, wanted);
  // The whole matrix only for a search; the partner's affinities need this entity's row alone.
  let values: Float32Array | undefined;
  let nearest: number[];
  let distanceOf: (i: number) => number;
  if (cached) {
    nearest = Array.from(cached.indices);
    const byIndex = new Map(nearest.map((i, s) => [i, cached.distances[s] ?? Number.NaN]));
    distanceOf = (i) => byIndex.get(i) ?? Number.NaN;
  } else {
    values = await readMatrix(db, factorSet.id, 'values', n, d);
    const distances = exactDistancesFrom(values, n, d, q, metric);
    nearest = topK(distances, wanted, false, q);
    distanceOf = (i) => distances[i] ?? Number.NaN;
  }
  const names = await labelsFor(db, factorSet.id, nearest);
  const items = nearest.map((i) => ({
    index: i,
    id: names.get(i)?.id ?? String(i),
    label: names.get(i)?.label ?? null,
    distance: distanceOf(i),
    similarity: metric === 'cosine' ? 1 - distanceOf(i) : null,
  }));
  const source: NeighboursAnswer['source'] = cached ? (cached.exact ? 'exact graph' : 'approximate graph') : 'exact search';

  let partner: NeighboursAnswer['partner'] = null;
  if (withPartner) {
    const row = values ? values.subarray(q * d, (q + 1) * d) : await readMatrixRow(db, factorSet.id, 'values', q, d);
    const other = await readMatrix(db, partnerSet.id, 'values', partnerSet.rows, d);
    const affinity = new Float64Array(partnerSet.rows);
    for (let j = 0; j < partnerSet.rows; j += 1) {
      let dot = 0;
      for (let c = 0; c < d; c += 1) dot += (row[c] ?? 0) * (other[j * d + c] ?? 0);
      affinity[j] = dot;
    }
    const top = topK(affinity, Math.min(k, partnerSet.rows), true, -1);
    const partnerNames = await labelsFor(db, partnerSet.id, top);
    partner = {
      factorSetId: partnerSet.id,
      name: partnerSet.name,
      items: top.map((j) => ({ id: partnerNames.get(j)?.id ?? String(j), label: partnerNames.get(j)?.label ?? null, affinity: affinity[j] ?? Number.NaN })),
    };
  }
  return { entity: { index: entity.idx, id: entity.entity_id, label: entity.label }, metric, source, items, partner };
}
