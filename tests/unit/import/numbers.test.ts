import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { toFinite } from '@/lib/import/text';

/** What the contract asks for: Number(), refusing blanks, non-finite values and hex/octal/binary. */
function reference(cell: string): number {
  const value = Number(cell);
  if (!Number.isFinite(value) || cell.trim() === '' || /^\s*[+-]?0[xXoObB]/.test(cell)) return Number.NaN;
  return value;
}

const same = (a: number, b: number): boolean => Object.is(a, b);

describe('toFinite', () => {
  it('agrees with Number() bit for bit on decimal text', () => {
    const digits = (min: number, max: number) => fc.string({ unit: fc.constantFrom(...'0123456789'), minLength: min, maxLength: max });
    const decimal = fc
      .tuple(fc.constantFrom('', '-', '+'), digits(0, 20), fc.constantFrom('', '.'), digits(0, 20), fc.constantFrom('', 'e', 'E', 'e-', 'e+'), digits(0, 3))
      .map((parts) => parts.join(''));
    fc.assert(
      fc.property(decimal, (cell) => same(toFinite(cell), reference(cell))),
      { numRuns: 20_000 },
    );
    fc.assert(
      fc.property(fc.double({ noNaN: true }), fc.integer({ min: 1, max: 17 }), (value, precision) => {
        const cells = [String(value), value.toPrecision(precision), value.toExponential(precision - 1), String(Math.fround(value))];
        return cells.every((cell) => same(toFinite(cell), reference(cell)));
      }),
      { numRuns: 20_000 },
    );
  });

  it('refuses what a factor value may not be', () => {
    for (const cell of ['', '  ', 'NaN', 'nan', 'Inf', '-Inf', 'Infinity', '-Infinity', 'NA', 'abc', '1e', '1e+', '.', '-', '0x1f', '0b11', '1,5', '1e999', '--1']) {
      expect(toFinite(cell), cell).toBeNaN();
    }
    expect(Object.is(toFinite('-0'), -0)).toBe(true);
    expect(toFinite(' 2.5 ')).toBe(2.5);
    expect(toFinite('5.')).toBe(5);
    expect(toFinite('.5')).toBe(0.5);
  });
});
