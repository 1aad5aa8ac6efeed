import { notFound } from '@/lib/api/errors';
import type { DbOrTx } from '@/lib/users/users';
import { readMatrix } from './blocks';
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
 * An entity's k nearest neighbours in the full latent space, by one exact pass over the matrix
 * (O(N·K) per query), so the map can show when a 2-D neighbour is not a latent one.
 */
export async function latentNeighbours(
  db: DbOrTx,
  factorSet: FactorSet,
  entityId: string,
  k: number,
  metric: 'euclidean' | 'cosine',
): Promise<NeighboursAnswer> {
  const entity = await entityRow(db, factorSet.id, entityId);
  if (!entity) throw notFound(`No entity "${entityId}" in this factor set`);
  const { rows: n, dims: d } = factorSet;
  const values = await readMatrix(db, factorSet.id, 'values', n, d);
  const q = entity.idx;
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
  const nearest = topK(distances, Math.min(k, n - 1), false, q);
  const names = await labelsFor(db, factorSet.id, nearest);
  const items = nearest.map((i) => ({
    index: i,
    id: names.get(i)?.id ?? String(i),
    label: names.get(i)?.label ?? null,
    distance: distances[i] ?? Number.NaN,
    similarity: metric === 'cosine' ? 1 - (distances[i] ?? Number.NaN) : null,
  }));

  let partner: NeighboursAnswer['partner'] = null;
  const partnerSet = factorSet.jointPartnerId ? await findFactorSet(db, factorSet.jointPartnerId) : undefined;
  if (partnerSet && partnerSet.dims === d) {
    const other = await readMatrix(db, partnerSet.id, 'values', partnerSet.rows, d);
    const affinity = new Float64Array(partnerSet.rows);
    for (let j = 0; j < partnerSet.rows; j += 1) {
      let dot = 0;
      for (let c = 0; c < d; c += 1) dot += (values[q * d + c] ?? 0) * (other[j * d + c] ?? 0);
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
  return { entity: { index: entity.idx, id: entity.entity_id, label: entity.label }, metric, items, partner };
}
