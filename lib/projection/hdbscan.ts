/**
 * HDBSCAN cluster proposals in the full latent space (Campello, Moulavi & Sander, "Density-based
 * clustering based on hierarchical density estimates", PAKDD 2013; the condensed tree and the
 * excess-of-mass selection as described by McInnes & Healy, "Accelerated hierarchical density
 * based clustering", ICDMW 2017). Checked against R's dbscan::hdbscan (Debian's r-cran-dbscan,
 * tests/unit/projection/hdbscan-reference.test.ts, fixture from scripts/reference/hdbscan.R).
 *
 * Steps, for n rows under the Euclidean distance d(a, b):
 *   1. core distance c(a): distance from a to its (minSamples − 1)-th nearest other row (0 for
 *      minSamples = 1), a density estimate: small in dense regions.
 *   2. mutual reachability m(a, b) = max(c(a), c(b), d(a, b)): pushes sparse points away from
 *      everything, so that single linkage on m is robust to noise.
 *   3. minimum spanning tree of m (Prim's algorithm on the dense graph, distances computed on the
 *      fly: O(n²·d) time, O(n) memory); above HDBSCAN_EXACT_MAX_POINTS entities, from the edges
 *      of the kNN graph only (knnTree, an approximation that keeps every within-cluster edge).
 *   4. single-linkage hierarchy from the tree's edges in increasing order (union–find).
 *   5. condensed tree: walking down from the root at λ = 1/distance, a split where both sides
 *      hold ≥ minClusterSize points makes two new clusters; a side smaller than that is points
 *      "falling out" of the parent cluster at that λ.
 *   6. stability of each condensed cluster C, Σ_{p ∈ C} (λ_p − λ_birth(C)); excess-of-mass
 *      selection bottom-up: keep C when its stability is at least the sum of its selected
 *      descendants', else keep those. The root is never selected (at least two clusters or none,
 *      as dbscan::hdbscan and the Python hdbscan library do by default).
 *   7. labels: each point gets the selected cluster above where it fell out, else −1 (noise).
 *
 * Why our own and not hdbscan-ts 1.0.17 (installed, and read before deciding): it builds the
 * full n × n distance matrix as number[][] (20,000 rows: 3.2 GB), uses squared distances in the
 * λ = 1/distance of the stabilities (which changes which clusters are selected), takes the core
 * distance one neighbour further than Campello et al. and dbscan::hdbscan, and tests cluster
 * containment with Array.includes over point lists (O(n³) overall). Ours is typed arrays
 * throughout and O(n²·d) time, O(n) memory.
 *
 * Ties: mutual reachability distances tie often (every short edge of a point weighs its core
 * distance). Tied merges are processed one at a time in the order Prim's algorithm found them, as
 * dbscan::hdbscan and the Python hdbscan library process their binary single-linkage trees; the
 * levels of the hierarchy do not depend on that order, but at a tied split whether a small piece
 * falls out of the parent or of a child at the same λ can, which moves stability between them.
 *
 * Checked (tests/unit/projection/hdbscan.test.ts): on iris and a seeded blob set with noise, at
 * minPts 5, 10 and 20, the labels (clusters and noise) equal dbscan::hdbscan's in all six cases
 * and the core distances to 10⁻¹². The stabilities differ by convention: R's (computeStability in
 * the package's src/hdbscan.cpp, read to trace a gap) credits a point that leaves in a group
 * smaller than minClusterSize from the λ of its own merge inside the group, capped at its
 * cluster's split; ours take the λ at which the group left, as step 6 and the Python library do.
 * Computed R's way (stabilityAsDbscan) they equal R's to 10⁻¹² in all 14 clusters; ours are up
 * to 7% lower, which changed no selection here.
 */
import { type KnnGraph, checkMatrix } from './knn';

/** Settings of HDBSCAN (stored with the clustering). */
export interface HdbscanParams {
  /**
   * Smallest group of entities reported as a cluster. Range 2 … n; typical 5–50 (common
   * practice: around 1% of the entities, at least 5). Larger values merge or drop small groups
   * and give fewer, bigger clusters; smaller values allow small, possibly spurious clusters.
   */
  minClusterSize: number;
  /**
   * Neighbourhood size of the density estimate: the core distance is the distance to the
   * (minSamples − 1)-th nearest other entity. Range 1 … n − 1; default minClusterSize (as
   * dbscan::hdbscan's single minPts and the Python hdbscan library). Larger values smooth the
   * density and declare more points noise (conservative); smaller ones keep more points in
   * clusters and follow finer structure.
   */
  minSamples?: number;
}

export interface HdbscanResult {
  /** Per entity: cluster 0 … clusters − 1, or −1 for noise. Clusters numbered in tree order. */
  labels: Int32Array;
  /** Number of clusters found (0 when the data has no cluster structure at this size). */
  clusters: number;
  /** Stability of each selected cluster, aligned with the labels (larger = more persistent). */
  stability: Float64Array;
  /**
   * The same stabilities as R's dbscan::hdbscan accounts them, for comparison with that reference
   * (selection uses `stability`). R credits a point that leaves its cluster inside a group
   * smaller than minClusterSize from the λ of the point's own merge within that group (capped at
   * the cluster's split), not from the λ at which the group left, as Campello et al. and the
   * Python hdbscan library do; its stabilities are therefore higher.
   */
  stabilityAsDbscan: Float64Array;
  /** Core distance of each entity (step 1). */
  coreDistances: Float64Array;
  /**
   * Membership strength in [0, 1] per entity, as dbscan::hdbscan's membership_prob:
   * (max core distance in its cluster − its core distance) / that maximum; 0 for noise.
   */
  membership: Float32Array;
  /** Share of entities labelled noise, in [0, 1]. */
  noiseShare: number;
}

/**
 * Up to this many entities the spanning tree is exact (Prim, O(n²·d): ~20 s at 20,000 × 32 here);
 * beyond, it is taken from the kNN graph (knnTree), which options.knn must then provide.
 */
export const HDBSCAN_EXACT_MAX_POINTS = 20_000;

/** Neighbours per point the kNN graph must hold for the approximate tree beyond HDBSCAN_EXACT_MAX_POINTS. */
export const HDBSCAN_MIN_GRAPH_K = 15;

export interface HdbscanOptions {
  /**
   * An exact Euclidean kNN graph of the same rows with k ≥ minSamples − 1 (the cached one), to
   * take the core distances from instead of an O(n²·d) pass. Its Float32 distances are exact to
   * ~6·10⁻⁸ relative, which only matters for exactly tied data.
   */
  knn?: KnnGraph;
  /** Called with a fraction done (0–1) and a phase; throwing from it stops the run. */
  onProgress?: (fraction: number, phase: string) => void;
}

function checkParams(params: HdbscanParams, n: number): { minClusterSize: number; minSamples: number } {
  const { minClusterSize } = params;
  const minSamples = params.minSamples ?? minClusterSize;
  if (!Number.isInteger(minClusterSize) || minClusterSize < 2 || minClusterSize > n) {
    throw new RangeError(`HDBSCAN: minClusterSize must be an integer from 2 to the number of entities (${n}), got ${minClusterSize}`);
  }
  if (!Number.isInteger(minSamples) || minSamples < 1 || minSamples > n - 1) {
    throw new RangeError(`HDBSCAN: minSamples must be an integer from 1 to n − 1 = ${n - 1}, got ${minSamples}`);
  }
  return { minClusterSize, minSamples };
}

/**
 * d(a, b) by direct differences in Float64 (four partial sums: ~2× faster than one in V8, and
 * still free of the cancellation of the ‖a‖² + ‖b‖² − 2a·b expansion, so duplicates are at 0).
 */
function distance(x: Float64Array, d: number, a: number, b: number): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  const pa = a * d;
  const pb = b * d;
  let t = 0;
  for (; t + 3 < d; t += 4) {
    const e0 = (x[pa + t] as number) - (x[pb + t] as number);
    const e1 = (x[pa + t + 1] as number) - (x[pb + t + 1] as number);
    const e2 = (x[pa + t + 2] as number) - (x[pb + t + 2] as number);
    const e3 = (x[pa + t + 3] as number) - (x[pb + t + 3] as number);
    s0 += e0 * e0;
    s1 += e1 * e1;
    s2 += e2 * e2;
    s3 += e3 * e3;
  }
  for (; t < d; t++) {
    const e = (x[pa + t] as number) - (x[pb + t] as number);
    s0 += e * e;
  }
  return Math.sqrt(s0 + s1 + (s2 + s3));
}

/** Core distances by a full pass: for each row the (m)-th smallest distance to the others. */
function coreDistancesDirect(x: Float64Array, n: number, d: number, m: number, report: (f: number) => void): Float64Array {
  const core = new Float64Array(n);
  if (m === 0) return core;
  // A max-heap of the m smallest distances per row.
  const heap = new Float64Array(m);
  for (let i = 0; i < n; i++) {
    heap.fill(Infinity);
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const value = distance(x, d, i, j);
      if (value >= (heap[0] as number)) continue;
      let position = 0;
      for (;;) {
        const left = 2 * position + 1;
        if (left >= m) break;
        const right = left + 1;
        const child = right < m && (heap[right] as number) > (heap[left] as number) ? right : left;
        if ((heap[child] as number) <= value) break;
        heap[position] = heap[child] as number;
        position = child;
      }
      heap[position] = value;
    }
    core[i] = heap[0] as number;
    if ((i & 255) === 255) report(i / n);
  }
  return core;
}

/**
 * Minimum spanning tree of the mutual reachability graph by Prim's algorithm from row 0, the
 * next vertex the nearest outside the tree (smallest index among ties). Returns n − 1 edges.
 */
function primTree(x: Float64Array, n: number, d: number, core: Float64Array, report: (f: number) => void): { from: Int32Array; to: Int32Array; weight: Float64Array } {
  const from = new Int32Array(n - 1);
  const to = new Int32Array(n - 1);
  const weight = new Float64Array(n - 1);
  const inTree = new Uint8Array(n);
  const best = new Float64Array(n).fill(Infinity);
  const bestFrom = new Int32Array(n);
  let current = 0;
  inTree[0] = 1;
  for (let step = 0; step < n - 1; step++) {
    const cc = core[current] as number;
    let next = -1;
    let nextWeight = Infinity;
    for (let j = 0; j < n; j++) {
      if (inTree[j] === 1) continue;
      let m = distance(x, d, current, j);
      if (cc > m) m = cc;
      const cj = core[j] as number;
      if (cj > m) m = cj;
      if (m < (best[j] as number)) {
        best[j] = m;
        bestFrom[j] = current;
      }
      if ((best[j] as number) < nextWeight) {
        nextWeight = best[j] as number;
        next = j;
      }
    }
    // With finite distances every vertex has a finite best, so next is found.
    if (next < 0) throw new Error('HDBSCAN: spanning tree step found no vertex');
    from[step] = bestFrom[next] as number;
    to[step] = next;
    weight[step] = nextWeight;
    inTree[next] = 1;
    current = next;
    if ((step & 255) === 255) report(step / n);
  }
  return { from, to, weight };
}

/**
 * Approximate minimum spanning tree for large sets: Kruskal's algorithm over the kNN graph's edges
 * only, weighted by mutual reachability; components the graph leaves apart are joined by edges of
 * infinite weight (they separate at λ = 0, above every cluster). Exact whenever every edge of the
 * true tree joins kNN neighbours, which holds for all but the longest edges between far groups —
 * exactly the edges that only order clusters, not form them.
 */
function knnTree(knn: KnnGraph, core: Float64Array): { from: Int32Array; to: Int32Array; weight: Float64Array } {
  const { n, k } = knn;
  const count = n * k;
  const weights = new Float64Array(count);
  for (let i = 0; i < n; i++) {
    for (let s = 0; s < k; s++) {
      const j = knn.indices[i * k + s] as number;
      weights[i * k + s] = Math.max(knn.distances[i * k + s] as number, core[i] as number, core[j] as number);
    }
  }
  const order = Int32Array.from({ length: count }, (_, e) => e).sort((a, b) => (weights[a] as number) - (weights[b] as number) || a - b);
  const up = new Int32Array(n);
  for (let i = 0; i < n; i++) up[i] = i;
  const find = (a: number): number => {
    let root = a;
    while (up[root] !== root) root = up[root] as number;
    while (up[a] !== root) {
      const next = up[a] as number;
      up[a] = root;
      a = next;
    }
    return root;
  };
  const from = new Int32Array(n - 1);
  const to = new Int32Array(n - 1);
  const weight = new Float64Array(n - 1);
  let edges = 0;
  for (let e = 0; e < count && edges < n - 1; e++) {
    const edge = order[e] as number;
    const a = Math.floor(edge / k);
    const b = knn.indices[edge] as number;
    const ra = find(a);
    const rb = find(b);
    if (ra === rb) continue;
    up[rb] = ra;
    from[edges] = a;
    to[edges] = b;
    weight[edges] = weights[edge] as number;
    edges++;
  }
  for (let i = 1; i < n && edges < n - 1; i++) {
    const ra = find(0);
    const rb = find(i);
    if (ra === rb) continue;
    up[rb] = ra;
    from[edges] = 0;
    to[edges] = i;
    weight[edges] = Infinity;
    edges++;
  }
  return { from, to, weight };
}

interface Condensed {
  /** Per condensed cluster: parent cluster (−1 for the root, cluster 0), birth λ, stability. */
  parent: Int32Array;
  birth: Float64Array;
  stability: Float64Array;
  /** Per condensed cluster: the stability as R's dbscan::hdbscan accounts it (see HdbscanResult). */
  stabilityAsDbscan: Float64Array;
  /** Per point: the condensed cluster it fell out of. */
  pointCluster: Int32Array;
  clusters: number;
}

/**
 * Single linkage from the tree's edges, then the condensed tree with its stabilities.
 * Hierarchy nodes: points 0 … n−1, merges n … 2n−2 (merge s joins left[s], right[s] at height[s]).
 */
function condense(n: number, tree: { from: Int32Array; to: Int32Array; weight: Float64Array }, minClusterSize: number): Condensed {
  const edges = n - 1;
  // Edges by increasing weight, ties in the order found (stable).
  const order = Int32Array.from({ length: edges }, (_, e) => e).sort((a, b) => (tree.weight[a] as number) - (tree.weight[b] as number) || a - b);
  const unionParent = new Int32Array(2 * n - 1);
  for (let i = 0; i < unionParent.length; i++) unionParent[i] = i;
  const find = (a: number): number => {
    let root = a;
    while (unionParent[root] !== root) root = unionParent[root] as number;
    while (unionParent[a] !== root) {
      const up = unionParent[a] as number;
      unionParent[a] = root;
      a = up;
    }
    return root;
  };
  const left = new Int32Array(edges);
  const right = new Int32Array(edges);
  const height = new Float64Array(edges);
  const size = new Int32Array(2 * n - 1);
  for (let i = 0; i < n; i++) size[i] = 1;
  // Height of the merge that takes in each point as a single point.
  const ownHeight = new Float64Array(n);
  for (let s = 0; s < edges; s++) {
    const e = order[s] as number;
    const a = find(tree.from[e] as number);
    const b = find(tree.to[e] as number);
    const node = n + s;
    left[s] = a;
    right[s] = b;
    height[s] = tree.weight[e] as number;
    if (a < n) ownHeight[a] = height[s] as number;
    if (b < n) ownHeight[b] = height[s] as number;
    size[node] = (size[a] as number) + (size[b] as number);
    unionParent[a] = node;
    unionParent[b] = node;
  }
  const root = 2 * n - 2;

  // Leaf order: each hierarchy node's points are one contiguous range [first, first + size).
  const leaves = new Int32Array(n);
  const first = new Int32Array(2 * n - 1);
  {
    const stack = [root];
    first[root] = 0;
    while (stack.length > 0) {
      const node = stack.pop() as number;
      if (node < n) {
        leaves[first[node] as number] = node;
        continue;
      }
      const a = left[node - n] as number;
      const b = right[node - n] as number;
      first[a] = first[node] as number;
      first[b] = (first[node] as number) + (size[a] as number);
      stack.push(b, a);
    }
  }

  const parent: number[] = [-1];
  const birth: number[] = [0];
  const stability: number[] = [0];
  // λ and size at which a cluster split into two (NaN: it never split).
  const death: number[] = [Number.NaN];
  const splitSize: number[] = [0];
  const pointCluster = new Int32Array(n);
  const fallOut = (node: number, cluster: number, lambda: number) => {
    const start = first[node] as number;
    const count = size[node] as number;
    for (let p = start; p < start + count; p++) pointCluster[leaves[p] as number] = cluster;
    const born = birth[cluster] as number;
    if (lambda > born) stability[cluster] = (stability[cluster] as number) + count * (lambda - born);
  };
  // Walk down from the root: each stack entry is a hierarchy node and the condensed cluster it
  // belongs to.
  const stack: number[] = [root, 0];
  while (stack.length > 0) {
    const cluster = stack.pop() as number;
    const node = stack.pop() as number;
    if (node < n) {
      // A single point reached without a split below minClusterSize (minClusterSize ≤ 1 cannot happen).
      fallOut(node, cluster, Infinity);
      continue;
    }
    const s = node - n;
    const h = height[s] as number;
    const lambda = h > 0 ? 1 / h : Infinity;
    const a = left[s] as number;
    const b = right[s] as number;
    const bigA = (size[a] as number) >= minClusterSize;
    const bigB = (size[b] as number) >= minClusterSize;
    if (bigA && bigB) {
      // A true split: the parent ends here; its points' λ is the split's.
      const born = birth[cluster] as number;
      if (lambda > born) stability[cluster] = (stability[cluster] as number) + (size[node] as number) * (lambda - born);
      death[cluster] = lambda;
      splitSize[cluster] = size[node] as number;
      for (const child of [a, b]) {
        const id = parent.length;
        parent.push(cluster);
        birth.push(lambda);
        stability.push(0);
        death.push(Number.NaN);
        splitSize.push(0);
        stack.push(child, id);
      }
    } else if (bigA) {
      fallOut(b, cluster, lambda);
      stack.push(a, cluster);
    } else if (bigB) {
      fallOut(a, cluster, lambda);
      stack.push(b, cluster);
    } else {
      fallOut(node, cluster, lambda);
    }
  }
  // R's accounting: a point counts from its own merge's λ, capped at its cluster's split.
  const stabilityAsDbscan = Float64Array.from(splitSize, (count, c) => (count > 0 ? count * ((death[c] as number) - (birth[c] as number)) : 0));
  for (let p = 0; p < n; p++) {
    const c = pointCluster[p] as number;
    const own = (ownHeight[p] as number) > 0 ? 1 / (ownHeight[p] as number) : Infinity;
    const split = death[c] as number;
    stabilityAsDbscan[c] = (stabilityAsDbscan[c] as number) + (Number.isNaN(split) ? own : Math.min(own, split)) - (birth[c] as number);
  }
  return { parent: Int32Array.from(parent), birth: Float64Array.from(birth), stability: Float64Array.from(stability), stabilityAsDbscan, pointCluster, clusters: parent.length };
}

/**
 * Excess-of-mass selection: bottom-up over the condensed clusters (children have larger ids than
 * their parents), the root excluded. Returns whether each condensed cluster is selected.
 */
function selectClusters(condensed: Condensed): Uint8Array {
  const { parent, clusters } = condensed;
  const stability = Float64Array.from(condensed.stability);
  const childSum = new Float64Array(clusters);
  const selected = new Uint8Array(clusters);
  for (let c = clusters - 1; c >= 1; c--) {
    // A leaf (no child clusters) has childSum 0 and is selected.
    if ((childSum[c] as number) > (stability[c] as number)) {
      stability[c] = childSum[c] as number;
    } else {
      selected[c] = 1;
    }
    const up = parent[c] as number;
    childSum[up] = (childSum[up] as number) + (stability[c] as number);
  }
  // A selected cluster's descendants are not selected: top-down, clear below the first selected.
  const covered = new Uint8Array(clusters);
  for (let c = 1; c < clusters; c++) {
    const up = parent[c] as number;
    if (up >= 1 && (covered[up] === 1 || selected[up] === 1)) {
      covered[c] = 1;
      selected[c] = 0;
    }
  }
  return selected;
}

/**
 * HDBSCAN of the n × d rows (see the module comment). `data` may be Float32 (factor rows) or
 * Float64; distances are computed in Float64.
 *
 * Cost: up to HDBSCAN_EXACT_MAX_POINTS, O(n²·d) time (the spanning tree; the core distances too
 * unless options.knn is given) and O(n) memory; beyond, O(n·k·log(n·k)) from options.knn.
 */
export function hdbscan(data: Float32Array | Float64Array, n: number, d: number, params: HdbscanParams, options: HdbscanOptions = {}): HdbscanResult {
  if (data instanceof Float32Array) checkMatrix('HDBSCAN', data, n, d);
  else checkMatrix('HDBSCAN', Float32Array.from(data), n, d);
  const { minClusterSize, minSamples } = checkParams(params, n);
  const report = options.onProgress ?? (() => undefined);
  const x = data instanceof Float64Array ? data : Float64Array.from(data);
  const m = minSamples - 1;
  let core: Float64Array;
  const knn = options.knn;
  if (knn !== undefined && m > 0 && knn.metric === 'euclidean' && knn.n === n && knn.k >= m) {
    core = new Float64Array(n);
    for (let i = 0; i < n; i++) core[i] = knn.distances[i * knn.k + m - 1] as number;
  } else {
    core = coreDistancesDirect(x, n, d, m, (f) => report(0.3 * f, 'HDBSCAN: core distances'));
  }
  report(0.3, 'HDBSCAN: spanning tree');
  let tree: { from: Int32Array; to: Int32Array; weight: Float64Array };
  if (n <= HDBSCAN_EXACT_MAX_POINTS) {
    tree = primTree(x, n, d, core, (f) => report(0.3 + 0.6 * f, 'HDBSCAN: spanning tree'));
  } else {
    if (knn === undefined || knn.metric !== 'euclidean' || knn.n !== n || knn.k < Math.max(m, HDBSCAN_MIN_GRAPH_K)) {
      throw new RangeError(`HDBSCAN: above ${HDBSCAN_EXACT_MAX_POINTS} entities it needs a Euclidean neighbour graph of the same rows with at least ${Math.max(m, HDBSCAN_MIN_GRAPH_K)} neighbours`);
    }
    tree = knnTree(knn, core);
  }
  report(0.9, 'HDBSCAN: cluster hierarchy');
  const condensed = condense(n, tree, minClusterSize);
  const selected = selectClusters(condensed);

  // Number the selected clusters in id order; each condensed cluster's label is that of its
  // nearest selected ancestor (or itself), −1 if none.
  const labelOf = new Int32Array(condensed.clusters).fill(-1);
  const stability: number[] = [];
  const stabilityAsDbscan: number[] = [];
  let clusters = 0;
  for (let c = 1; c < condensed.clusters; c++) {
    if (selected[c] === 1) {
      labelOf[c] = clusters++;
      stability.push(condensed.stability[c] as number);
      stabilityAsDbscan.push(condensed.stabilityAsDbscan[c] as number);
    } else {
      labelOf[c] = labelOf[condensed.parent[c] as number] as number;
    }
  }
  const labels = new Int32Array(n);
  let noise = 0;
  for (let i = 0; i < n; i++) {
    const label = labelOf[condensed.pointCluster[i] as number] as number;
    labels[i] = label;
    if (label < 0) noise++;
  }
  // Membership strength as dbscan::hdbscan: relative to the largest core distance in the cluster.
  const maxCore = new Float64Array(clusters);
  for (let i = 0; i < n; i++) {
    const label = labels[i] as number;
    if (label >= 0 && (core[i] as number) > (maxCore[label] as number)) maxCore[label] = core[i] as number;
  }
  const membership = new Float32Array(n);
  for (let i = 0; i < n; i++) {
    const label = labels[i] as number;
    if (label < 0) continue;
    const top = maxCore[label] as number;
    membership[i] = top > 0 ? (top - (core[i] as number)) / top : 1;
  }
  report(1, 'HDBSCAN: done');
  return { labels, clusters, stability: Float64Array.from(stability), stabilityAsDbscan: Float64Array.from(stabilityAsDbscan), coreDistances: core, membership, noiseShare: noise / n };
}
