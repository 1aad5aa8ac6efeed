import { describe, expect, it } from 'vitest';
import { mulberry32 } from '@/lib/align/random';
import {
  combineSelection,
  indicesInBox,
  indicesInPolygon,
  pointInPolygon,
  selectionModeOf,
  simplifyLasso,
} from '@/lib/map/selection';

const poly = (...xy: number[]): Float64Array => Float64Array.from(xy);

/** Integer grid points (0..size−1)², as the n × 2 float32 coordinates the map holds. */
function grid(size: number): Float32Array {
  const coords = new Float32Array(size * size * 2);
  for (let y = 0; y < size; y++)
    for (let x = 0; x < size; x++) {
      coords[2 * (y * size + x)] = x;
      coords[2 * (y * size + x) + 1] = y;
    }
  return coords;
}

/** The same test by brute force over every point, as a second opinion for indicesInPolygon. */
function bruteForce(coords: Float32Array, polygon: Float64Array): number[] {
  const hits: number[] = [];
  for (let p = 0; p < coords.length / 2; p++) if (pointInPolygon(coords[2 * p] ?? 0, coords[2 * p + 1] ?? 0, polygon)) hits.push(p);
  return hits;
}

// A "C": the square 0–10 with the notch x > 4, 3 < y < 7 cut out of its right side.
const C_SHAPE = poly(0, 0, 10, 0, 10, 3, 4, 3, 4, 7, 10, 7, 10, 10, 0, 10);
// A bow-tie: the two diagonals cross at (5, 5); the left and right triangles are the lobes.
const BOW_TIE = poly(0, 0, 10, 10, 10, 0, 0, 10);

describe('pointInPolygon (even-odd rule)', () => {
  it('a square', () => {
    const square = poly(0, 0, 4, 0, 4, 4, 0, 4);
    expect(pointInPolygon(2, 2, square)).toBe(true);
    expect(pointInPolygon(5, 2, square)).toBe(false);
    expect(pointInPolygon(-1, 2, square)).toBe(false);
    expect(pointInPolygon(2, 4.5, square)).toBe(false);
  });

  it('a concave "C": the notch is outside, the arms inside', () => {
    expect(pointInPolygon(2, 5, C_SHAPE)).toBe(true); // the spine
    expect(pointInPolygon(8, 5, C_SHAPE)).toBe(false); // the notch
    expect(pointInPolygon(8, 1.5, C_SHAPE)).toBe(true); // lower arm
    expect(pointInPolygon(8, 8.5, C_SHAPE)).toBe(true); // upper arm
  });

  it('a self-intersecting bow-tie: both lobes inside, the pinched gaps outside', () => {
    expect(pointInPolygon(2, 5, BOW_TIE)).toBe(true);
    expect(pointInPolygon(8, 5, BOW_TIE)).toBe(true);
    expect(pointInPolygon(5, 2, BOW_TIE)).toBe(false);
    expect(pointInPolygon(5, 8, BOW_TIE)).toBe(false);
  });

  it('a pentagram: the tips are inside, the twice-wrapped centre is outside', () => {
    const star: number[] = [];
    for (let k = 0; k < 5; k++) {
      const angle = Math.PI / 2 + (k * 4 * Math.PI) / 5; // every second vertex of a pentagon
      star.push(10 * Math.cos(angle), 10 * Math.sin(angle));
    }
    const pentagram = Float64Array.from(star);
    expect(pointInPolygon(0, 0, pentagram)).toBe(false);
    expect(pointInPolygon(0, 8, pentagram)).toBe(true);
  });

  it('encloses nothing with fewer than three vertices', () => {
    expect(pointInPolygon(0, 0, poly())).toBe(false);
    expect(pointInPolygon(0.5, 0, poly(0, 0, 1, 0))).toBe(false);
  });
});

describe('indicesInPolygon', () => {
  const coords = grid(101); // 10,201 points at the integers 0..100

  it('selects exactly the grid points of a known region', () => {
    // Square 10.5–20.5: the integers 11..20 on both axes.
    expect(indicesInPolygon(coords, poly(10.5, 10.5, 20.5, 10.5, 20.5, 20.5, 10.5, 20.5))).toHaveLength(100);
    // Triangle x ≥ 0.5, y ≥ 0.5, x + y ≤ 40.5: the integer pairs with x, y ≥ 1 and x + y ≤ 40, 780 of them.
    expect(indicesInPolygon(coords, poly(0.5, 0.5, 40, 0.5, 0.5, 40))).toHaveLength(780);
  });

  it('a scaled "C" on the grid: the square less its notch', () => {
    // The C scaled by 10 and shifted by 0.5: square 0.5–100.5 (all 101² less the 0 row and column
    // = 100²), notch x > 40.5, 30.5 < y < 70.5 → x 41..100 (60) × y 31..70 (40) = 2,400 points.
    const c = C_SHAPE.map((v) => v * 10 + 0.5);
    expect(indicesInPolygon(coords, c)).toHaveLength(100 * 100 - 60 * 40);
  });

  it('a bow-tie on the grid: the two lobes', () => {
    // Scaled by 10 and shifted by 0.5 in x, 0.25 in y, so no grid point lies on an edge: the
    // diagonals become y = x − 0.25 and y = 100.75 − x, crossing at (50.5, 50.25).
    const tie = BOW_TIE.map((v, i) => v * 10 + (i % 2 === 0 ? 0.5 : 0.25));
    const hits = indicesInPolygon(coords, tie);
    expect(Array.from(hits)).toEqual(bruteForce(coords, tie));
    // Column by column: the left lobe is |y − 50.25| < x − 0.5, the right |y − 50.25| < 100.5 − x.
    let expected = 0;
    for (let x = 1; x <= 100; x++) {
      const halfWidth = x <= 50 ? x - 0.5 : 100.5 - x;
      for (let y = 0; y <= 100; y++) if (Math.abs(y - 50.25) < halfWidth) expected++;
    }
    expect(expected).toBeGreaterThan(4000);
    expect(hits).toHaveLength(expected);
  });

  it('agrees point for point with pointInPolygon on random lassos and points', () => {
    const random = mulberry32(20261201);
    const points = new Float32Array(20_000).map(() => random() * 100);
    for (let trial = 0; trial < 20; trial++) {
      const vertices = 3 + Math.floor(random() * 300);
      const lasso = new Float64Array(vertices * 2).map(() => 10 + random() * 80);
      const hits = indicesInPolygon(points, lasso);
      expect(Array.from(hits)).toEqual(bruteForce(points, lasso));
    }
  });

  it('returns ascending indices and skips NaN coordinates', () => {
    const points = Float32Array.from([5, 5, Number.NaN, 5, 5, Number.NaN, 1, 1, 5, 6]);
    expect(Array.from(indicesInPolygon(points, poly(0, 0, 10, 0, 10, 10, 0, 10)))).toEqual([0, 3, 4]);
  });

  it('is empty for degenerate or non-finite lassos', () => {
    expect(indicesInPolygon(coords, poly(0, 0, 10, 10))).toHaveLength(0);
    expect(indicesInPolygon(coords, poly(0, 5, 10, 5, 20, 5))).toHaveLength(0);
    expect(indicesInPolygon(coords, poly(0, 0, 10, Number.NaN, 0, 10))).toHaveLength(0);
  });
});

describe('indicesInBox', () => {
  const coords = grid(11);

  it('takes corners in any order and includes the edges', () => {
    const a = indicesInBox(coords, 2, 3, 4, 5);
    expect(a).toHaveLength(9);
    expect(Array.from(indicesInBox(coords, 4, 5, 2, 3))).toEqual(Array.from(a));
    expect(Array.from(indicesInBox(coords, 4, 3, 2, 5))).toEqual(Array.from(a));
    expect(a[0]).toBe(3 * 11 + 2);
  });

  it('is empty for a NaN corner', () => {
    expect(indicesInBox(coords, Number.NaN, 0, 5, 5)).toHaveLength(0);
  });
});

describe('combineSelection', () => {
  const current = Uint32Array.from([1, 3, 5, 7]);
  const hit = Uint32Array.from([7, 2, 3, 3, 9]);

  it('replace: the hit, sorted and unique', () => {
    expect(Array.from(combineSelection(current, hit, 'replace', 10))).toEqual([2, 3, 7, 9]);
  });

  it('add: the union', () => {
    expect(Array.from(combineSelection(current, hit, 'add', 10))).toEqual([1, 2, 3, 5, 7, 9]);
  });

  it('remove: the current selection less the hit', () => {
    expect(Array.from(combineSelection(current, hit, 'remove', 10))).toEqual([1, 5]);
  });

  it('drops indices beyond n and handles empty inputs', () => {
    expect(Array.from(combineSelection(Uint32Array.from([2, 50]), Uint32Array.from([60, 4]), 'add', 10))).toEqual([2, 4]);
    expect(combineSelection(new Uint32Array(0), new Uint32Array(0), 'add', 10)).toHaveLength(0);
    expect(combineSelection(current, hit, 'remove', 0)).toHaveLength(0);
  });

  it('follows the modifier keys: shift adds, alt removes', () => {
    expect(selectionModeOf({ shiftKey: false, altKey: false })).toBe('replace');
    expect(selectionModeOf({ shiftKey: true, altKey: false })).toBe('add');
    expect(selectionModeOf({ shiftKey: false, altKey: true })).toBe('remove');
    expect(selectionModeOf({ shiftKey: true, altKey: true })).toBe('remove');
  });
});

describe('simplifyLasso', () => {
  it('drops points closer than minStep to the previous kept one', () => {
    const path = poly(0, 0, 0.5, 0, 1, 0, 1.2, 0, 2.5, 0, 2.5, 0.9, 2.5, 1.1);
    // 0.5 and 1.2 are too close to 0 and 1; 2.5,0.9 is 0.9 from 2.5,0, but 2.5,1.1 is 1.1 from it.
    expect(Array.from(simplifyLasso(path, 1))).toEqual([0, 0, 1, 0, 2.5, 0, 2.5, 1.1]);
    // With a step of 1.05, 1,0 is too close to 0,0, so 1.2,0 is the next kept:
    expect(Array.from(simplifyLasso(path, 1.05))).toEqual([0, 0, 1.2, 0, 2.5, 0, 2.5, 1.1]);
  });

  it('keeps everything finite at step 0, drops non-finite points', () => {
    expect(Array.from(simplifyLasso(poly(0, 0, 0, 0, Number.NaN, 1, 3, 3), 0))).toEqual([0, 0, 0, 0, 3, 3]);
    expect(simplifyLasso(poly(), 1)).toHaveLength(0);
  });
});
