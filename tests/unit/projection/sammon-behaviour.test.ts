/**
 * Behaviour of lib/projection/sammon.ts beyond the reference values: monotone stress, duplicate
 * rows, cancellation, determinism and limits. Data: the iris data scikit-learn ships
 * (tests/fixtures/projection/pca-reference.json, scripts/reference/pca.py). Expected stresses come
 * from MASS::sammon (tests/fixtures/projection/sammon-reference.json, scripts/reference/sammon.R).
 */
import { describe, expect, it } from 'vitest';
import { SAMMON_MAX_POINTS, condensedDistances, sammon, sammonAsync } from '@/lib/projection/sammon';
import { irisData, sammonReference, uniqueIris } from './pca-fixtures';

const massIris = sammonReference.cases.find((c) => c.name === 'iris-unique');

describe('Sammon mapping behaviour', () => {
  it('stress never increases across accepted iterations, and the last one is the result', () => {
    const { data, n, d } = uniqueIris();
    const seen: number[] = [];
    const iterations: number[] = [];
    const result = sammon(data, n, d, {
      tolerance: 0,
      maxIterations: 60,
      onProgress: (iteration, stress) => {
        iterations.push(iteration);
        seen.push(stress);
      },
    });
    expect(iterations).toEqual(Array.from({ length: result.iterations }, (_, i) => i + 1));
    expect(seen[0]).toBeLessThanOrEqual(result.initialStress);
    for (let i = 1; i < seen.length; i++) expect(seen[i]).toBeLessThanOrEqual(seen[i - 1] as number);
    expect(seen.at(-1)).toBe(result.stress);
  });

  it('duplicate rows (MASS refuses them): full iris with its repeated row maps both copies to one point', () => {
    const { data, n, d } = irisData();
    const { dropped } = uniqueIris();
    expect(dropped).toEqual([142]);
    // Rows 101 and 142 (0-based) are equal in iris.
    const result = sammon(data, n, d);
    expect(result.layout.every(Number.isFinite)).toBe(true);
    expect(result.layout[2 * 101]).toBe(result.layout[2 * 142]);
    expect(result.layout[2 * 101 + 1]).toBe(result.layout[2 * 142 + 1]);
    // One extra copy changes the stress only a little: within 5% of MASS::sammon on the distinct rows.
    // Source: MASS::sammon stress on unique(iris), scripts/reference/sammon.R
    expect(Math.abs(result.stress - (massIris?.stress ?? Number.NaN)) / (massIris?.stress ?? 1)).toBeLessThan(0.05);
  });

  it('duplicates stay together even from a start that separates them', () => {
    const data = new Float32Array([0, 0, 1, 0, 1, 0, 0, 1, 1, 1, 2, 3]);
    const initial = new Float64Array([0, 0, 1, 0, 1.5, 0.5, 0, 1, 1, 1, 2, 3]);
    const result = sammon(data, 6, 2, { initial });
    expect(result.layout[2]).toBe(result.layout[4]);
    expect(result.layout[3]).toBe(result.layout[5]);
    expect(result.stress).toBeLessThan(1e-3);
  });

  it('all rows equal, one row, or two rows: no division by zero', () => {
    const same = sammon(new Float32Array(12).fill(3), 4, 3);
    expect(same.stopReason).toBe('trivial');
    expect(same.stress).toBe(0);
    expect(Array.from(same.layout).every((value) => value === 0)).toBe(true);
    expect(sammon(new Float32Array([1, 2]), 1, 2).layout).toEqual(new Float32Array([0, 0]));
    const two = sammon(new Float32Array([0, 0, 3, 4]), 2, 2);
    expect(two.stress).toBeLessThan(1e-12);
    expect(Math.hypot((two.layout[0] as number) - (two.layout[2] as number), (two.layout[1] as number) - (two.layout[3] as number))).toBeCloseTo(5, 5);
  });

  it('coincident start points for distinct rows are pulled apart, not NaN', () => {
    const data = new Float32Array([0, 0, 1, 0, 0, 1, 1, 1]);
    const initial = new Float64Array([0, 0, 0, 0, 0, 1, 1, 1]);
    const result = sammon(data, 4, 2, { initial });
    expect(result.layout.every(Number.isFinite)).toBe(true);
    expect(result.stress).toBeLessThan(result.initialStress);
  });

  it('an AbortSignal aborted from the progress callback stops it with the signal\'s reason', () => {
    const { data, n, d } = uniqueIris();
    const controller = new AbortController();
    let calls = 0;
    expect(() =>
      sammon(data, n, d, {
        tolerance: 0,
        signal: controller.signal,
        onProgress: (iteration) => {
          calls = iteration;
          if (iteration === 3) controller.abort();
        },
      }),
    ).toThrow(expect.objectContaining({ name: 'AbortError' }));
    expect(calls).toBe(3);
    expect(() => sammon(data, n, d, { signal: AbortSignal.abort() })).toThrow(expect.objectContaining({ name: 'AbortError' }));
  });

  it('sammonAsync sees an abort raised by an event (not by the callback itself) within one pass', async () => {
    const { data, n, d } = uniqueIris();
    const controller = new AbortController();
    let calls = 0;
    const run = sammonAsync(data, n, d, {
      tolerance: 0,
      signal: controller.signal,
      onProgress: (iteration) => {
        calls = iteration;
        if (iteration === 2) setImmediate(() => controller.abort(new Error('cancelled by the job')));
      },
    });
    await expect(run).rejects.toThrow('cancelled by the job');
    expect(calls).toBeLessThanOrEqual(3);
  });

  it('sammonAsync gives the same result as sammon', async () => {
    const { data, n, d } = uniqueIris();
    const sync = sammon(data, n, d);
    const async = await sammonAsync(data, n, d);
    expect(Array.from(async.layout)).toEqual(Array.from(sync.layout));
    expect(async.stress).toBe(sync.stress);
  });

  it('is deterministic: same input and settings, bit-identical layout', () => {
    const { data, n, d } = irisData();
    const a = sammon(data, n, d, { maxIterations: 40 });
    const b = sammon(Float32Array.from(data), n, d, { maxIterations: 40 });
    expect(Buffer.from(a.layout.buffer).equals(Buffer.from(b.layout.buffer))).toBe(true);
    expect(a.stress).toBe(b.stress);
  });

  it('maxIterations 0 returns the start and its stress', () => {
    const { data, n, d } = uniqueIris();
    const result = sammon(data, n, d, { maxIterations: 0 });
    expect(result.iterations).toBe(0);
    expect(result.stress).toBe(result.initialStress);
    expect(result.stopReason).toBe('max-iterations');
  });

  it(`refuses more than SAMMON_MAX_POINTS = ${SAMMON_MAX_POINTS} points with a RangeError naming the limit`, () => {
    const n = SAMMON_MAX_POINTS + 1;
    expect(() => sammon(new Float32Array(n), n, 1)).toThrow(/5001 points exceed SAMMON_MAX_POINTS = 5000/);
    expect(() => condensedDistances(new Float32Array(n), n, 1)).toThrow(RangeError);
  });

  it('rejects bad options and input', () => {
    const { data, n, d } = uniqueIris();
    expect(() => sammon(data, n, d, { maxIterations: -1 })).toThrow(/maxIterations must be an integer ≥ 0/);
    expect(() => sammon(data, n, d, { tolerance: Number.NaN })).toThrow(/tolerance/);
    expect(() => sammon(data, n, d, { initialStep: 0.6 })).toThrow(/initialStep must lie in \(0, 0.5\]/);
    expect(() => sammon(data, n, d, { curvatureFloor: 2 })).toThrow(/curvatureFloor must lie in \[0, 1\]/);
    expect(() => sammon(data, n, d, { initial: new Float32Array(3) })).toThrow(/initial layout: expected 298 values/);
    const bad = Float32Array.from(data);
    bad[4 * 7 + 2] = Number.POSITIVE_INFINITY;
    expect(() => sammon(bad, n, d)).toThrow(/value at \[7, 2\] is not finite/);
  });
});
