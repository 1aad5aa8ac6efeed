import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { expect } from 'vitest';
import { isNumberLike } from '@/lib/import/text';
import { ImportError, type ImportLimits } from '@/lib/import/types';

export const LIMITS: ImportLimits = { maxBytes: 64 * 1024 * 1024, maxRows: 100_000, maxDims: 64, maxDraws: 1000 };

/** A fresh folder under the OS temp dir; `cleanup` removes it. */
export function tempFolder(): { path: (name: string) => string; cleanup: () => void } {
  const folder = mkdtempSync(join(tmpdir(), 'asterism-import-'));
  let counter = 0;
  return {
    // a counter keeps file names unique across property-test runs
    path: (name) => join(folder, `${counter++}-${name}`),
    cleanup: () => rmSync(folder, { recursive: true, force: true }),
  };
}

/** Bit patterns, so -0 vs 0 and every NaN payload would count as a difference. */
export function bits(values: Float32Array | null): number[] {
  if (!values) return [];
  return Array.from(new Uint32Array(values.buffer, values.byteOffset, values.length));
}

export function expectSameFloats(actual: Float32Array | null, expected: Float32Array): void {
  expect(actual).not.toBeNull();
  expect(actual?.length).toBe(expected.length);
  expect(bits(actual)).toEqual(bits(expected));
}

/** Any float32, negatives, subnormals and the extremes included. */
export const float32 = fc.float({ noNaN: true, noDefaultInfinity: true }).map(Math.fround);

const awkward = fc.constantFrom('a,b', 'say "hi"', '"quoted"', 'naïve', '東京', 'Zürich; Basel', 'tab\there', 'two\nlines', 'cr\r\nlf', 'emoji 😀', ' padded ', "o'brien");

/** Entity ids as people make them: plain, with delimiters, quotes, line breaks and non-ASCII. */
export const entityId = fc
  .oneof(fc.string({ unit: 'grapheme', minLength: 1, maxLength: 10 }), awkward, fc.tuple(awkward, fc.nat(999)).map(([a, n]) => `${a}${n}`))
  // ids that read as numbers (or NaN/NA) would make a headerless first column look numeric
  .filter((id) => id.trim() !== '' && !isNumberLike(id) && !id.includes('\uFEFF'));

export function idsArb(n: number): fc.Arbitrary<string[]> {
  return fc.uniqueArray(entityId, { minLength: n, maxLength: n });
}

export interface MatrixCase {
  ids: string[];
  dims: number;
  values: Float32Array;
}

export const matrixArb: fc.Arbitrary<MatrixCase> = fc
  .record({ n: fc.integer({ min: 1, max: 40 }), k: fc.integer({ min: 1, max: 8 }) })
  .chain(({ n, k }) =>
    fc.record({
      ids: idsArb(n),
      dims: fc.constant(k),
      values: fc.array(float32, { minLength: n * k, maxLength: n * k }).map((list) => Float32Array.from(list)),
    }),
  );

export interface DrawsCase {
  ids: string[];
  dims: number;
  drawCount: number;
  draws: Float32Array;
}

export const drawsArb: fc.Arbitrary<DrawsCase> = fc
  .record({ n: fc.integer({ min: 1, max: 12 }), k: fc.integer({ min: 1, max: 4 }), d: fc.integer({ min: 1, max: 6 }) })
  .chain(({ n, k, d }) =>
    fc.record({
      ids: idsArb(n),
      dims: fc.constant(k),
      drawCount: fc.constant(d),
      draws: fc.array(float32, { minLength: d * n * k, maxLength: d * n * k }).map((list) => Float32Array.from(list)),
    }),
  );

/** Runs `run`, expecting an ImportError, and returns it for closer checks. */
export async function importError(run: Promise<unknown>): Promise<ImportError> {
  try {
    await run;
  } catch (error) {
    expect(error).toBeInstanceOf(ImportError);
    return error as ImportError;
  }
  throw new Error('expected an ImportError, but the file parsed');
}
