/**
 * The neighbour-graph cache: one kNN graph per factor set and metric in the knn_graphs table
 * (migration 2026-12-01-0006), shared by the projection job (UMAP's graph, the fidelity scores)
 * and the clustering job (HDBSCAN's core distances and, for large sets, its spanning tree).
 *
 * Which graph is stored (so that a result never depends on which job filled the cache first):
 * - exact search affordable (knn-graph.ts, n²·d ≤ EXACT_KNN_MAX_WORK): the exact graph at
 *   k = min(n − 1, EXACT_CACHE_K = 50), the largest k any job uses (trustworthiness at 50). The
 *   exact graph at a smaller k is its prefix, so every caller slices it (firstNeighbours).
 * - otherwise: NN-descent at k = min(n − 1, APPROX_CACHE_K = 15) with the fixed seed
 *   KNN_CACHE_SEED. An approximate graph's prefix is not the approximate graph at the smaller k,
 *   and the search's cost grows with k², so a job needing more than 15 neighbours of a large set
 *   (UMAP with nNeighbors > 16, HDBSCAN with minSamples > 16) computes its own graph at its k
 *   with the same seed, which is not stored (likewise any job needing more than 50 neighbours of
 *   a small set). Either way the graph for a given (data, metric, k) is always the same.
 *
 * Invalidation: a row is used only while its input_checksum equals the factor set's
 * checksum_sha256 (the SHA-256 of the stored values); otherwise it is recomputed and replaced.
 * A row is also recomputed when its `method` is not the current one (APPROX_GRAPH_VERSION: the
 * approximate search changed). Deleting a factor set deletes its graphs (foreign key, cascade).
 * Graphs of more than KNN_CACHE_MAX_ENTRIES (n·k) entries are computed but not stored.
 *
 * Concurrency: two jobs that miss at once both compute the same graph (same input, same seed, so
 * the same bytes), and the second upsert overwrites the first harmlessly.
 */
import { type Kysely, sql } from 'kysely';
import type { Database } from '@/db/types';
import { mulberry32 } from '@/lib/align/random';
import type { KnnGraph, KnnMetric } from '@/lib/projection/knn';
import { exactIsAffordable, firstNeighbours, knnGraph } from '@/lib/projection/knn-graph';

/** k of a cached exact graph (trustworthiness and continuity at 50 are the largest use). */
export const EXACT_CACHE_K = 50;
/** k of a cached approximate graph (UMAP at its default nNeighbors = 15, HDBSCAN's graph tree). */
export const APPROX_CACHE_K = 15;
/** Seed of every cached approximate graph. */
export const KNN_CACHE_SEED = 20261201;
/**
 * Largest graph stored, in n·k entries (8 bytes each: 160 MB at the limit, e.g. 1,000,000 entities
 * at k = 20). Larger graphs are computed for each job that needs them and not kept.
 */
export const KNN_CACHE_MAX_ENTRIES = 20_000_000;
/**
 * Version of the approximate search's arithmetic, part of a cached approximate graph's `method`:
 * bump it whenever knn-approx.ts would give another graph for the same rows, k and seed, so that
 * graphs cached before are recomputed instead of mixed with new ones.
 * 2: candidate priorities hashed per (iteration, point, neighbour); leaf pairs by squaredDistance.
 * 3: the local join in WebAssembly, its distances summed in Float32 (descent-join.wasm).
 */
export const APPROX_GRAPH_VERSION = 3;

/** The `method` a current approximate graph is stored under; rows with another are recomputed. */
const APPROX_METHOD = `NN-descent ${APPROX_GRAPH_VERSION} (seed ${KNN_CACHE_SEED})`;

export interface FactorSetForGraph {
  id: string;
  checksumSha256: string;
  rows: number;
  dims: number;
}

export interface CachedGraph {
  /** The graph with exactly the k asked for. */
  graph: KnnGraph;
  exact: boolean;
  /** Whether it came from the table (false: computed in this call). */
  hit: boolean;
  /** What to record with a result: "exact" or "NN-descent 2 (seed …)". */
  method: string;
}

function bytesOfInts(values: Int32Array): Buffer {
  return Buffer.from(values.buffer, values.byteOffset, values.byteLength);
}

function bytesOfFloats(values: Float32Array): Buffer {
  return Buffer.from(values.buffer, values.byteOffset, values.byteLength);
}

/** Copies (aligned) out of a bytea: a Buffer from the driver may start at any byte offset. */
function intsOf(data: Buffer): Int32Array {
  const copy = new Uint8Array(data.byteLength);
  copy.set(data);
  return new Int32Array(copy.buffer);
}

function floatsOfBytes(data: Buffer): Float32Array {
  const copy = new Uint8Array(data.byteLength);
  copy.set(data);
  return new Float32Array(copy.buffer);
}

/** The k the cache stores for a set of n rows of d dimensions. */
export function cachedK(n: number, d: number): number {
  return Math.min(n - 1, exactIsAffordable(n, d) ? EXACT_CACHE_K : APPROX_CACHE_K);
}

/**
 * The factor set's k-nearest-neighbour graph in `metric` with exactly `k` neighbours per row,
 * from the cache when valid, else computed (and stored when it is the canonical graph).
 *
 * @param values - the factor set's n × d rows, as read for the job.
 * @param k - neighbours needed, 1 … n − 1.
 */
export async function factorSetGraph(
  db: Kysely<Database>,
  factorSet: FactorSetForGraph,
  values: Float32Array,
  metric: KnnMetric,
  k: number,
  options: { threads?: number; signal?: AbortSignal; onProgress?: (fraction: number, phase: string) => void } = {},
): Promise<CachedGraph> {
  const n = factorSet.rows;
  const d = factorSet.dims;
  if (!Number.isInteger(k) || k < 1 || k > n - 1) throw new RangeError(`neighbour graph: k must be an integer from 1 to n − 1 = ${n - 1}, got ${k}`);
  const canonicalK = cachedK(n, d);
  const exact = exactIsAffordable(n, d);
  const method = exact ? 'exact' : APPROX_METHOD;
  const search = (searchK: number) =>
    knnGraph(values, n, d, searchK, metric, mulberry32(KNN_CACHE_SEED), {
      ...(options.threads !== undefined ? { threads: options.threads } : {}),
      ...(options.signal ? { signal: options.signal } : {}),
      ...(options.onProgress ? { onProgress: options.onProgress } : {}),
    });
  if (k > canonicalK) {
    // Beyond the canonical k (UMAP with many neighbours): a search of its own, not stored.
    const chosen = await search(k);
    return { graph: chosen.graph, exact: chosen.exact, hit: false, method };
  }
  const row = await db
    .selectFrom('knn_graphs')
    .selectAll()
    .where('factor_set_id', '=', factorSet.id)
    .where('metric', '=', metric)
    .executeTakeFirst();
  if (row && row.input_checksum === factorSet.checksumSha256 && row.n === n && row.k === canonicalK && row.exact === exact && row.seed === KNN_CACHE_SEED && row.method === method) {
    const graph: KnnGraph = { n, k: row.k, metric, indices: intsOf(row.indices), distances: floatsOfBytes(row.distances) };
    if (graph.indices.length === n * row.k && graph.distances.length === n * row.k) {
      return { graph: firstNeighbours(graph, k), exact: row.exact, hit: true, method: row.method };
    }
  }
  const started = Date.now();
  const chosen = await search(canonicalK);
  if (n * canonicalK <= KNN_CACHE_MAX_ENTRIES) {
    const stored = {
      input_checksum: factorSet.checksumSha256,
      n,
      k: canonicalK,
      exact: chosen.exact,
      seed: KNN_CACHE_SEED,
      method,
      indices: bytesOfInts(chosen.graph.indices),
      distances: bytesOfFloats(chosen.graph.distances),
      duration_ms: Date.now() - started,
      created_at: new Date(),
    };
    await db
      .insertInto('knn_graphs')
      .values({ factor_set_id: factorSet.id, metric, ...stored })
      .onConflict((oc) => oc.columns(['factor_set_id', 'metric']).doUpdateSet(stored))
      .execute();
  }
  return { graph: firstNeighbours(chosen.graph, k), exact: chosen.exact, hit: false, method };
}

/** One entity's row of a cached graph (the map's neighbour queries). */
export interface CachedNeighbourRow {
  indices: Int32Array;
  distances: Float32Array;
  exact: boolean;
  method: string;
}

/**
 * The first k neighbours of entity `index` from the cached graph of `metric`, when a valid one
 * (input checksum matches) holds at least k neighbours; otherwise undefined (the caller searches).
 * Only that row's bytes leave the database (substring of the bytea), so a query reads k·8 bytes,
 * not the graph (graphs up to KNN_CACHE_MAX_ENTRIES are cached: 1,000,000 entities at k = 15).
 */
export async function cachedNeighbourRow(db: Kysely<Database>, factorSet: FactorSetForGraph, index: number, metric: KnnMetric, k: number): Promise<CachedNeighbourRow | undefined> {
  if (!Number.isInteger(index) || index < 0 || index >= factorSet.rows) throw new RangeError(`neighbour graph: entity index ${index} is out of range`);
  const row = await db
    .selectFrom('knn_graphs')
    .select((eb) => [
      'k',
      'n',
      'exact',
      'method',
      'input_checksum',
      sql<Buffer>`substring(${eb.ref('indices')} from ${sql.lit(1)} + ${eb.ref('k')} * 4 * ${index} for 4 * ${k})`.as('row_indices'),
      sql<Buffer>`substring(${eb.ref('distances')} from ${sql.lit(1)} + ${eb.ref('k')} * 4 * ${index} for 4 * ${k})`.as('row_distances'),
    ])
    .where('factor_set_id', '=', factorSet.id)
    .where('metric', '=', metric)
    .executeTakeFirst();
  if (!row || row.input_checksum !== factorSet.checksumSha256 || row.n !== factorSet.rows || row.k < k) return undefined;
  if (!row.exact && row.method !== APPROX_METHOD) return undefined;
  const indices = intsOf(row.row_indices);
  const distances = floatsOfBytes(row.row_distances);
  if (indices.length !== k || distances.length !== k) return undefined;
  return { indices, distances, exact: row.exact, method: row.method };
}
