/**
 * Projection benchmark (a script, not a timed test; issue 4, "Benchmark"): runs our exact and
 * approximate kNN, PCA, UMAP and Sammon mapping on the digits data scikit-learn ships
 * (tests/fixtures/projection/pca-digits.csv.gz, 1797 × 64) and on seeded Gaussian mixtures of
 * 10,000 × 32 and 50,000 × 32 (and PCA alone on a 100,000 × 64 mixture), and prints for each step the seconds, the peak resident memory of
 * this process while it ran, and trustworthiness at 15 of each layout (exact up to 20,000 points,
 * else estimated from 2,000 seeded query points, see sampledTrustworthiness). After each UMAP it
 * times the projection job's fidelity scores of that map (exact up to 20,000 points, sampled
 * beyond, on the same threads), which a job spends beside its layout.
 *
 * When they are installed it runs the reference libraries on the same data in the same run, as
 * child processes, and prints ours/reference ratios:
 *   - R uwot::umap (Debian r-cran-uwot; n_neighbors 15, min_dist 0.1, init "pca", n_threads 2,
 *     n_sgd_threads 2: all threads, as issue 4's goal says; its layout is then not reproducible),
 *   - R MASS::sammon (r-cran-mass; on the unique rows, as MASS refuses zero distances),
 *   - Python sklearn.decomposition.PCA (python3-sklearn, /usr/bin/python3),
 *   - Python pynndescent.NNDescent (python3-pynndescent; warmed up first, since its first call
 *     compiles with numba for ~20 s), n_neighbors 16 (it counts the point itself), recall by us.
 *     Our NN-descent is warmed the same way (a first search on 2,000 rows keeps its threads).
 * Memory of a reference is its own peak (VmHWM from /proc/self/status), not comparable one-to-one
 * with ours (R and Python load their runtimes and libraries).
 *
 *   npm run bench:projection               # everything (about 20 minutes on two busy cores)
 *   npm run bench:projection -- --quick    # digits and 10,000 × 32, no MASS at 5,000 (~5 minutes)
 *   npm run bench:projection -- --no-reference
 *   npm run bench:projection -- --quick --umap-js   # also UMAP by umap-js itself, the reference engine
 */
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Worker } from 'node:worker_threads';
import { gunzipSync } from 'node:zlib';
import { mulberry32, normalGenerator } from '../lib/align/random';
import { sampledTrustworthiness, trustworthiness } from '../lib/projection/fidelity';
import { projectionFidelityParallel } from '../lib/projection/fidelity-parallel';
import { type KnnGraph, exactKnnOfRows, exactKnnParallel } from '../lib/projection/knn';
import { approxKnn, knnRecall } from '../lib/projection/knn-approx';
import { runProjection } from '../lib/projection/methods';
import { ProgressReporter } from '../lib/projection/job-control';
import { parseProjectionParams } from '../lib/projection/params';
import { SAMMON_MAX_POINTS } from '../lib/projection/sammon';
import { DEFAULT_UMAP_ENGINE, runUmap } from '../lib/projection/umap';
import { FIDELITY_MAX_ENTITIES, sampledProjectionQuality } from '../lib/projections/sampled-fidelity';

const args = new Set(process.argv.slice(2));
const quick = args.has('--quick');
const withReference = !args.has('--no-reference');
/** Also time UMAP's reference engine, umap-js (lib/projection/umap.ts), on the same graph. */
const withUmapJs = args.has('--umap-js');
const THREADS = 2;
const K = 15;
const root = path.resolve(import.meta.dirname, '..');

interface Dataset {
  name: string;
  data: Float32Array;
  n: number;
  d: number;
}

function digits(): Dataset {
  const text = gunzipSync(readFileSync(path.join(root, 'tests/fixtures/projection/pca-digits.csv.gz'))).toString('utf8').trim();
  const lines = text.split('\n');
  const d = lines[0]?.split(',').length ?? 0;
  const data = new Float32Array(lines.length * d);
  lines.forEach((line, i) => line.split(',').forEach((value, j) => (data[i * d + j] = Number(value))));
  return { name: 'digits 1797×64', data, n: lines.length, d };
}

/** 20 spherical unit-variance clusters in d dimensions, centres N(0, 6²) per coordinate. */
function mixture(n: number, d: number, seed: number): Dataset {
  const normal = normalGenerator(mulberry32(seed));
  const clusters = 20;
  const centres = Float64Array.from({ length: clusters * d }, () => 6 * normal());
  const data = new Float32Array(n * d);
  for (let i = 0; i < n; i++) {
    const c = i % clusters;
    for (let t = 0; t < d; t++) data[i * d + t] = (centres[c * d + t] as number) + normal();
  }
  return { name: `mixture ${n.toLocaleString('en')}×${d}`, data, n, d };
}

/**
 * Peak RSS sampled every 20 ms by a worker thread (it keeps sampling while the main thread is
 * busy in synchronous arithmetic, which a timer on the main thread could not).
 */
class MemorySampler {
  private readonly shared = new Float64Array(new SharedArrayBuffer(16));
  private readonly worker: Worker;

  constructor() {
    this.worker = new Worker(
      `const { workerData } = require('node:worker_threads');
       const peak = new Float64Array(workerData);
       setInterval(() => { const rss = process.memoryUsage().rss; if (rss > peak[0]) peak[0] = rss; }, 20);`,
      { eval: true, workerData: this.shared.buffer },
    );
    this.worker.unref();
  }

  reset(): void {
    this.shared[0] = process.memoryUsage().rss;
  }

  peakMb(): number {
    return Math.max(this.shared[0] as number, process.memoryUsage().rss) / 2 ** 20;
  }

  async stop(): Promise<void> {
    await this.worker.terminate();
  }
}

interface Row {
  dataset: string;
  step: string;
  seconds: number;
  peakMb: number;
  quality: string;
  reference?: { seconds: number; peakMb: number; quality: string; name: string };
}

const rows: Row[] = [];
const memory = new MemorySampler();

async function timed<T>(work: () => Promise<T> | T): Promise<{ value: T; seconds: number; peakMb: number }> {
  memory.reset();
  const started = performance.now();
  const value = await work();
  return { value, seconds: (performance.now() - started) / 1000, peakMb: memory.peakMb() };
}

function trust15(set: Dataset, layout: Float32Array): number {
  if (set.n <= 20_000) return trustworthiness(set.data, set.n, set.d, layout, [K])[0] as number;
  const random = mulberry32(99);
  const queries = new Set<number>();
  while (queries.size < 2000) queries.add(Math.floor(random() * set.n));
  return sampledTrustworthiness(set.data, set.n, set.d, layout, K, Int32Array.from(queries));
}

// ---- references, as child processes ------------------------------------------------------------

function available(command: string, probe: string[]): boolean {
  const result = spawnSync(command, probe, { stdio: 'ignore' });
  return result.status === 0;
}

const haveR = withReference && available('Rscript', ['-e', 'library(uwot); library(MASS)']);
const havePython = withReference && available('/usr/bin/python3', ['-c', 'import sklearn']);
const havePynndescent = withReference && available('/usr/bin/python3', ['-c', 'import pynndescent']);
const work = mkdtempSync(path.join(tmpdir(), 'asterism-bench-'));

function writeRows(set: Dataset): string {
  const file = path.join(work, `${set.n}x${set.d}.f32`);
  writeFileSync(file, Buffer.from(set.data.buffer, set.data.byteOffset, set.data.byteLength));
  return file;
}

interface ReferenceOutput {
  seconds: number;
  peakMb: number;
  out?: string;
}

function runReference(command: string, scriptArgs: string[], script: string): ReferenceOutput {
  const output = execFileSync(command, [...scriptArgs, script], { encoding: 'utf8', maxBuffer: 1 << 26, stdio: ['ignore', 'pipe', 'pipe'] });
  const last = output.trim().split('\n').pop() ?? '{}';
  return JSON.parse(last) as ReferenceOutput;
}

const R_PEAK = 'peak <- as.numeric(sub("VmHWM:\\\\s*([0-9]+) kB", "\\\\1", grep("VmHWM", readLines("/proc/self/status"), value = TRUE))) / 1024';
const PY_PEAK = 'peak = [int(l.split()[1]) for l in open("/proc/self/status") if l.startswith("VmHWM")][0] / 1024';

function readR(file: string, set: Dataset): string {
  return `x <- matrix(readBin("${file}", "numeric", size = 4, n = ${set.n * set.d}), ncol = ${set.d}, byrow = TRUE)`;
}

function uwotReference(set: Dataset, file: string): { seconds: number; peakMb: number; layout: Float32Array } {
  const out = path.join(work, `uwot-${set.n}.f64`);
  const script = `suppressMessages(library(uwot)); ${readR(file, set)}; set.seed(42)
    t <- proc.time()[["elapsed"]]; y <- umap(x, n_neighbors = 15, min_dist = 0.1, init = "pca", n_threads = ${THREADS}, n_sgd_threads = ${THREADS}); s <- proc.time()[["elapsed"]] - t
    writeBin(as.numeric(t(y)), "${out}", size = 8); ${R_PEAK}
    cat(sprintf('{"seconds": %f, "peakMb": %f}\\n', s, peak))`;
  const result = runReference('Rscript', ['-e'], script);
  const layout = Float32Array.from(new Float64Array(readFileSync(out).buffer.slice(0)));
  return { seconds: result.seconds, peakMb: result.peakMb, layout };
}

function sammonReference(set: Dataset, file: string): { seconds: number; peakMb: number; stress: number } {
  const script = `suppressMessages(library(MASS)); ${readR(file, set)}; x <- unique(x)
    t <- proc.time()[["elapsed"]]; fit <- sammon(dist(x), trace = FALSE); s <- proc.time()[["elapsed"]] - t; ${R_PEAK}
    cat(sprintf('{"seconds": %f, "peakMb": %f, "stress": %f}\\n', s, peak, fit$stress))`;
  const result = runReference('Rscript', ['-e'], script) as ReferenceOutput & { stress: number };
  return { seconds: result.seconds, peakMb: result.peakMb, stress: result.stress };
}

function pcaReference(set: Dataset, file: string): { seconds: number; peakMb: number } {
  const script = `import json, time, numpy as np
from sklearn.decomposition import PCA
x = np.fromfile("${file}", dtype=np.float32).reshape(${set.n}, ${set.d}).astype(np.float64)
t = time.perf_counter(); PCA(n_components=2, svd_solver="full").fit_transform(x); s = time.perf_counter() - t
${PY_PEAK}
print(json.dumps({"seconds": s, "peakMb": peak}))`;
  return runReference('/usr/bin/python3', ['-c'], script);
}

function pynndescentReference(set: Dataset, file: string): { seconds: number; peakMb: number; graph: KnnGraph } {
  const out = path.join(work, `pynnd-${set.n}.i32`);
  const script = `import json, time, numpy as np
from pynndescent import NNDescent
x = np.fromfile("${file}", dtype=np.float32).reshape(${set.n}, ${set.d})
NNDescent(x[:2000], n_neighbors=16, random_state=1)  # warm-up: numba compiles on the first call
t = time.perf_counter(); idx = NNDescent(x, n_neighbors=16, random_state=1, n_jobs=${THREADS}).neighbor_graph[0]; s = time.perf_counter() - t
idx[:, 1:].astype(np.int32).tofile("${out}")
${PY_PEAK}
print(json.dumps({"seconds": s, "peakMb": peak}))`;
  const result = runReference('/usr/bin/python3', ['-c'], script);
  const indices = new Int32Array(readFileSync(out).buffer.slice(0));
  // pynndescent drops the point itself first only when it is its own nearest (no duplicates here).
  return { ...result, graph: { n: set.n, k: K, metric: 'euclidean', indices, distances: new Float32Array(set.n * K) } };
}

/** Recall against the exact graph, or against exact neighbours of 1,000 query points. */
function recallOf(graph: KnnGraph, set: Dataset, exact: KnnGraph | undefined): number {
  if (exact) return knnRecall(graph, exact);
  const queries = Int32Array.from({ length: 1000 }, (_, r) => Math.floor((r * set.n) / 1000));
  return knnRecall(graph, exactKnnOfRows(set.data, set.n, set.d, K, 'euclidean', queries), queries);
}

/** Recall of a graph whose distances are unknown (pynndescent): by membership only. */
function membershipRecall(graph: KnnGraph, set: Dataset, exact: KnnGraph | undefined): number {
  const queries = exact ? Int32Array.from({ length: set.n }, (_, i) => i) : Int32Array.from({ length: 1000 }, (_, r) => Math.floor((r * set.n) / 1000));
  const truth = exact ?? { ...exactKnnOfRows(set.data, set.n, set.d, K, 'euclidean', queries), n: queries.length };
  let found = 0;
  queries.forEach((i, r) => {
    const row = exact ? i : r;
    const want = new Set(truth.indices.subarray(row * K, row * K + K));
    for (let s = 0; s < K; s++) if (want.has(graph.indices[i * K + s] as number)) found++;
  });
  return found / (queries.length * K);
}

// ---- the run ------------------------------------------------------------------------------------

async function bench(set: Dataset): Promise<void> {
  console.log(`\n${set.name}`);
  const file = withReference ? writeRows(set) : '';
  const push = (row: Row) => {
    rows.push(row);
    const reference = row.reference ? `   ${row.reference.name}: ${row.reference.seconds.toFixed(2)} s, ${row.reference.peakMb.toFixed(0)} MB, ${row.reference.quality}, ratio ${(row.seconds / row.reference.seconds).toFixed(2)}` : '';
    console.log(`  ${row.step.padEnd(22)} ${row.seconds.toFixed(2).padStart(8)} s ${row.peakMb.toFixed(0).padStart(6)} MB  ${row.quality}${reference}`);
  };

  // Exact kNN (skipped at 50,000 with --quick, where it is the slow part).
  let exact: KnnGraph | undefined;
  let exactSeconds = Number.NaN;
  let exactPeakMb = Number.NaN;
  if (!(quick && set.n > 20_000)) {
    const run = await timed(() => exactKnnParallel(set.data, set.n, set.d, K, 'euclidean', { threads: THREADS }));
    exact = run.value;
    exactSeconds = run.seconds;
    exactPeakMb = run.peakMb;
    push({ dataset: set.name, step: `exact kNN k=${K}`, seconds: run.seconds, peakMb: run.peakMb, quality: 'recall 1' });
  }
  // Warm, as pynndescent is warmed below: a first search on 2,000 rows starts the worker threads
  // (kept for later searches, knn-approx.ts) and compiles their code.
  await approxKnn(set.data.subarray(0, Math.min(set.n, 2000) * set.d), Math.min(set.n, 2000), set.d, K, 'euclidean', mulberry32(1), { threads: THREADS });
  const approx = await timed(() => approxKnn(set.data, set.n, set.d, K, 'euclidean', mulberry32(1), { threads: THREADS }));
  const approxRow: Row = { dataset: set.name, step: `NN-descent kNN k=${K}`, seconds: approx.seconds, peakMb: approx.peakMb, quality: `recall ${recallOf(approx.value, set, exact).toFixed(4)}` };
  if (havePynndescent) {
    const reference = pynndescentReference(set, file);
    approxRow.reference = { name: 'pynndescent', seconds: reference.seconds, peakMb: reference.peakMb, quality: `recall ${membershipRecall(reference.graph, set, exact).toFixed(4)}` };
  }
  push(approxRow);

  const pca = await timed(() => runProjection({ data: set.data, n: set.n, d: set.d, method: 'pca', params: {}, seed: 1 }));
  const pcaRow: Row = { dataset: set.name, step: 'PCA', seconds: pca.seconds, peakMb: pca.peakMb, quality: `T(15) ${trust15(set, pca.value.coordinates).toFixed(4)}` };
  if (havePython) pcaRow.reference = { name: 'sklearn PCA', quality: '', ...pcaReference(set, file) };
  push(pcaRow);

  // UMAP with the graph the job would use (exact up to 20,000 × 32, NN-descent beyond); its
  // seconds include that search, as uwot's include its own.
  const useExact = set.n <= 20_000 && exact !== undefined;
  const graph = useExact && exact ? exact : approx.value;
  const graphSeconds = useExact ? exactSeconds : approx.seconds;
  const umap = await timed(() => runProjection({ data: set.data, n: set.n, d: set.d, method: 'umap', params: {}, seed: 42, knn: graph, threads: THREADS }));
  const umapRow: Row = {
    dataset: set.name,
    step: `UMAP ${DEFAULT_UMAP_ENGINE} + ${useExact ? 'exact' : 'NN-descent'} kNN`,
    seconds: graphSeconds + umap.seconds,
    peakMb: Math.max(umap.peakMb, useExact ? exactPeakMb : approx.peakMb),
    quality: `T(15) ${trust15(set, umap.value.coordinates).toFixed(4)} (layout ${umap.seconds.toFixed(2)} s)`,
  };
  if (haveR) {
    const reference = uwotReference(set, file);
    umapRow.reference = { name: 'uwot (incl. its kNN)', seconds: reference.seconds, peakMb: reference.peakMb, quality: `T(15) ${trust15(set, reference.layout).toFixed(4)}` };
  }
  push(umapRow);
  // The projection job's fidelity scores of that map (run-job.ts): exact up to
  // FIDELITY_MAX_ENTITIES, given the exact graph at k = 50 as the job's cache holds it (searched
  // here outside the timing), sampled beyond.
  const coordinates = umap.value.coordinates;
  if (set.n <= FIDELITY_MAX_ENTITIES) {
    const latentKnn = await exactKnnParallel(set.data, set.n, set.d, Math.min(set.n - 1, 50), 'euclidean', { threads: THREADS });
    const scores = await timed(() => projectionFidelityParallel(set.data, set.n, set.d, coordinates, mulberry32(42), { latentKnn, threads: THREADS }));
    const { trustworthiness: t, continuity: c } = scores.value;
    push({ dataset: set.name, step: 'fidelity (exact)', seconds: scores.seconds, peakMb: scores.peakMb, quality: `T(15) ${(t[1] ?? Number.NaN).toFixed(4)}, C(15) ${(c[1] ?? Number.NaN).toFixed(4)}` });
  } else {
    const scores = await timed(() => sampledProjectionQuality(set.data, set.n, set.d, coordinates, 'euclidean', mulberry32(42), () => {}, { threads: THREADS }));
    push({ dataset: set.name, step: 'fidelity (sampled)', seconds: scores.seconds, peakMb: scores.peakMb, quality: `T(15) ≈ ${(scores.value.trustworthiness['15'] ?? Number.NaN).toFixed(4)}, ${scores.value.sampledQueries} queries` });
  }
  // The reference engine on the same graph and seed, on request (slow: minutes at 10,000 points).
  if (withUmapJs) {
    const params = parseProjectionParams('umap', {}, set.n);
    const reference = await timed(() => runUmap({ data: set.data, n: set.n, d: set.d, params, seed: 42, knn: graph, engine: 'umap-js', progress: new ProgressReporter(undefined) }));
    push({ dataset: set.name, step: 'UMAP umap-js (graph given)', seconds: reference.seconds, peakMb: reference.peakMb, quality: `T(15) ${trust15(set, reference.value).toFixed(4)}` });
  }

  // Sammon: up to SAMMON_MAX_POINTS rows (its O(n²) distance matrix).
  const sammonSet: Dataset = set.n <= SAMMON_MAX_POINTS ? set : { name: `${set.name} (first 5,000)`, data: set.data.slice(0, 5000 * set.d), n: 5000, d: set.d };
  if (set.n <= 10_000) {
    const sammon = await timed(() => runProjection({ data: sammonSet.data, n: sammonSet.n, d: sammonSet.d, method: 'sammon', params: {}, seed: 1 }));
    const sammonRow: Row = {
      dataset: sammonSet.name,
      step: `Sammon (${sammonSet.n} rows)`,
      seconds: sammon.seconds,
      peakMb: sammon.peakMb,
      quality: `stress ${(sammon.value.stress ?? Number.NaN).toFixed(4)}, T(15) ${trust15(sammonSet, sammon.value.coordinates).toFixed(4)}`,
    };
    // MASS::sammon on 5,000 rows takes minutes; only in the full run.
    if (haveR && (!quick || sammonSet.n <= 2000)) {
      const reference = sammonReference(sammonSet, sammonSet === set ? file : writeRows(sammonSet));
      sammonRow.reference = { name: 'MASS::sammon', seconds: reference.seconds, peakMb: reference.peakMb, quality: `stress ${reference.stress.toFixed(4)}` };
    }
    push(sammonRow);
  }
}

/** PCA alone at issue 4's size for its goal (100,000 × 64 in no more time than scikit-learn). */
async function benchPca(set: Dataset): Promise<void> {
  console.log(`\n${set.name}`);
  const pca = await timed(() => runProjection({ data: set.data, n: set.n, d: set.d, method: 'pca', params: {}, seed: 1 }));
  const row: Row = { dataset: set.name, step: 'PCA', seconds: pca.seconds, peakMb: pca.peakMb, quality: `explained ${(pca.value.explainedVarianceRatio ?? []).map((v) => v.toFixed(4)).join(', ')}` };
  if (havePython) row.reference = { name: 'sklearn PCA', quality: '', ...pcaReference(set, writeRows(set)) };
  rows.push(row);
  const reference = row.reference ? `   ${row.reference.name}: ${row.reference.seconds.toFixed(2)} s, ${row.reference.peakMb.toFixed(0)} MB, ratio ${(row.seconds / row.reference.seconds).toFixed(2)}` : '';
  console.log(`  ${row.step.padEnd(22)} ${row.seconds.toFixed(2).padStart(8)} s ${row.peakMb.toFixed(0).padStart(6)} MB  ${row.quality}${reference}`);
}

try {
  console.log(`Asterism projection benchmark (${quick ? 'quick' : 'full'}; ${THREADS} threads; references: ${[haveR ? 'R uwot, MASS' : '', havePython ? 'sklearn' : '', havePynndescent ? 'pynndescent' : ''].filter(Boolean).join(', ') || 'none'})`);
  await bench(digits());
  await bench(mixture(10_000, 32, 20261201));
  if (!quick) await bench(mixture(50_000, 32, 20261202));
  await benchPca(mixture(100_000, 64, 20261203));
  console.log('\nAs JSON:');
  console.log(JSON.stringify(rows));
} finally {
  await memory.stop();
  rmSync(work, { recursive: true, force: true });
}
