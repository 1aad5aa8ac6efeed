/**
 * Loaders for the committed reference data of lib/projection's PCA and Sammon tests:
 * tests/fixtures/projection/pca-reference.json, pca-digits.csv.gz (scripts/reference/pca.py,
 * scikit-learn) and sammon-reference.json (scripts/reference/sammon.R, MASS). The tests read only
 * these files, so they need neither Python nor R.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { gunzipSync } from 'node:zlib';
import { z } from 'zod';

const fixtures = path.resolve(import.meta.dirname, '../../fixtures/projection');
const rows = z.array(z.array(z.number()));

const pcaFitSchema = z.object({
  standardise: z.boolean(),
  explainedVariance: z.array(z.number()),
  explainedVarianceRatio: z.array(z.number()),
  components: rows,
  firstScores: rows,
});
const pcaSchema = z.object({
  source: z.string(),
  sklearn: z.string(),
  datasets: z.array(
    z.object({
      name: z.string(),
      n: z.number().int(),
      d: z.number().int(),
      data: rows.optional(),
      fits: z.array(pcaFitSchema),
    }),
  ),
});
export type PcaReferenceFit = z.infer<typeof pcaFitSchema>;

const sammonCaseSchema = z.object({
  name: z.string(),
  n: z.number().int(),
  droppedRows: z.array(z.number().int()),
  niter: z.number().int(),
  magic: z.number(),
  tol: z.number(),
  initialStress: z.number(),
  stress: z.number(),
  iterations: z.number().int(),
  seconds: z.number(),
  trace: z.array(z.string()),
  start: rows.optional(),
  points: rows.optional(),
});
const sammonSchema = z.object({ source: z.string(), mass: z.string(), irisMaxAbsDifferenceFromRDatasets: z.number(), cases: z.array(sammonCaseSchema) });
export type SammonReferenceCase = z.infer<typeof sammonCaseSchema>;

export const pcaReference = pcaSchema.parse(JSON.parse(readFileSync(path.join(fixtures, 'pca-reference.json'), 'utf8')));
export const sammonReference = sammonSchema.parse(JSON.parse(readFileSync(path.join(fixtures, 'sammon-reference.json'), 'utf8')));

/** Row-major Float64Array from an array of rows (fixtures only; the library never takes number[][]). */
export function fromRows(values: readonly (readonly number[])[]): Float64Array {
  const k = values[0]?.length ?? 0;
  const out = new Float64Array(values.length * k);
  values.forEach((row, i) => {
    if (row.length !== k) throw new Error(`ragged fixture row ${i}`);
    out.set(row, i * k);
  });
  return out;
}

/** The iris data scikit-learn ships (sklearn.datasets.load_iris().data, 150 × 4), as float32 like a factor set. */
export function irisData(): { data: Float32Array; n: number; d: number } {
  const { data, n, d } = irisData64();
  return { data: Float32Array.from(data), n, d };
}

/** The iris data in float64, exactly the values scikit-learn fitted (5.1 is not a float32). */
export function irisData64(): { data: Float64Array; n: number; d: number } {
  const iris = pcaReference.datasets.find((set) => set.name === 'iris');
  if (iris?.data === undefined) throw new Error('pca-reference.json has no iris data');
  return { data: fromRows(iris.data), n: iris.n, d: iris.d };
}

/**
 * Iris without repeated rows, keeping first occurrences (R's unique(), as scripts/reference/sammon.R
 * does); float32 like a factor set, or the float64 values R saw.
 */
export function uniqueIris(): { data: Float32Array; n: number; d: number; dropped: number[] };
export function uniqueIris(precision: 'float64'): { data: Float64Array; n: number; d: number; dropped: number[] };
export function uniqueIris(precision: 'float32' | 'float64' = 'float32'): { data: Float32Array | Float64Array; n: number; d: number; dropped: number[] } {
  const { data, n, d } = irisData64();
  const seen = new Set<string>();
  const kept: number[] = [];
  const dropped: number[] = [];
  for (let i = 0; i < n; i++) {
    const key = Array.from(data.subarray(i * d, (i + 1) * d)).join(',');
    if (seen.has(key)) dropped.push(i);
    else {
      seen.add(key);
      kept.push(i);
    }
  }
  const out = precision === 'float64' ? new Float64Array(kept.length * d) : new Float32Array(kept.length * d);
  kept.forEach((row, index) => out.set(data.subarray(row * d, (row + 1) * d), index * d));
  return { data: out, n: kept.length, d, dropped };
}

/** The digits data scikit-learn ships (sklearn.datasets.load_digits().data, 1797 × 64, integers 0..16). */
export function digitsData(): { data: Float32Array; n: number; d: number } {
  const text = gunzipSync(readFileSync(path.join(fixtures, 'pca-digits.csv.gz'))).toString('utf8').trim();
  const lines = text.split('\n');
  const d = lines[0]?.split(',').length ?? 0;
  const data = new Float32Array(lines.length * d);
  lines.forEach((line, i) => {
    const values = line.split(',');
    if (values.length !== d) throw new Error(`pca-digits.csv.gz line ${i + 1}: ${values.length} values, expected ${d}`);
    values.forEach((value, j) => {
      data[i * d + j] = Number(value);
    });
  });
  return { data, n: lines.length, d };
}

export function maxAbsDifference(a: ArrayLike<number>, b: ArrayLike<number>): number {
  if (a.length !== b.length) throw new Error(`length ${a.length} ≠ ${b.length}`);
  let worst = 0;
  for (let index = 0; index < a.length; index++) worst = Math.max(worst, Math.abs((a[index] as number) - (b[index] as number)));
  return worst;
}
