/** The long observation table → design: encoding, and bad input refused with file, line and column. */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildDesign, checkRank, type ObservationColumns } from '@/lib/fit/observations';
import { readObservationFile } from '@/lib/fit/read-observations';
import { fitSettingsSchema, resolveFitSettings } from '@/lib/fit/settings';
import { ImportError } from '@/lib/import/types';

const header = ['shop', 'category', 'sales', 'footfall', 'season'];
const base: ObservationColumns = { rowColumn: 'shop', columnColumn: 'category', outcome: 'sales', covariates: ['footfall', 'season'], offset: null, offsetScale: 'log', likelihood: 'poisson', rank: 1 };

/** A 6 × 5 grid, every pair once (30 observations); `extra` may change a row's cells. */
function grid(outcome: (t: number) => string = (t) => String(t % 5), extra: (cells: string[], t: number) => void = () => {}): string[][] {
  const rows: string[][] = [];
  let t = 0;
  for (const shop of ['s1', 's2', 's3', 's4', 's5', 's6']) {
    for (const category of ['fiction', 'poetry', 'maps', 'cookery', 'travel']) {
      const cells = [shop, category, outcome(t), String(100 + 7 * t), t % 2 === 0 ? 'winter' : 'summer'];
      extra(cells, t);
      rows.push(cells);
      t++;
    }
  }
  return rows;
}

function refusal(run: () => unknown): ImportError {
  try {
    run();
  } catch (error) {
    if (error instanceof ImportError) return error;
    throw error;
  }
  throw new Error('expected an ImportError');
}

describe('buildDesign', () => {
  it('indexes entities in first-appearance order and one-hot encodes categorical covariates (first level dropped)', () => {
    const design = buildDesign('sales.csv', header, grid(), base);
    expect(design.n).toBe(30);
    expect(design.rowIds).toEqual(['s1', 's2', 's3', 's4', 's5', 's6']);
    expect(design.columnIds).toEqual(['fiction', 'poetry', 'maps', 'cookery', 'travel']);
    expect(Array.from(design.row.slice(4, 7))).toEqual([0, 1, 1]);
    expect(Array.from(design.column.slice(4, 7))).toEqual([4, 0, 1]);
    expect(design.covariateNames).toEqual(['footfall', 'season=summer']);
    expect(design.p).toBe(2);
    expect(Array.from(design.x.slice(0, 4))).toEqual([100, 0, 107, 1]);
    expect(design.offset).toBeNull();
  });

  it('adds log exposure with offsetScale "exposure", or the column as is with "log"', () => {
    const exposure = buildDesign('sales.csv', header, grid(), { ...base, covariates: [], offset: 'footfall', offsetScale: 'exposure' });
    expect(exposure.offset?.[1]).toBeCloseTo(Math.log(107), 12);
    const log = buildDesign('sales.csv', header, grid(), { ...base, covariates: [], offset: 'footfall', offsetScale: 'log' });
    expect(log.offset?.[1]).toBe(107);
  });

  it('refuses a Bernoulli outcome that is not 0/1, naming line and column', () => {
    const error = refusal(() => buildDesign('sales.csv', header, grid((t) => (t === 4 ? '2' : String(t % 2))), { ...base, likelihood: 'bernoulli' }));
    expect(error.code).toBe('outcome_not_binary');
    expect(error.places[0]).toMatchObject({ file: 'sales.csv', line: 6, column: 'sales' });
    expect(error.message).toMatch(/not 0 or 1/);
  });

  it('refuses negative and non-integer Poisson counts', () => {
    const error = refusal(() => buildDesign('sales.csv', header, grid((t) => (t === 2 ? '-1' : t === 3 ? '2.5' : '3')), base));
    expect(error.code).toBe('outcome_not_count');
    expect(error.count).toBe(2);
    expect(error.places.map((place) => place.line)).toEqual([4, 5]);
  });

  it('refuses non-finite and blank values in the outcome and numeric covariates', () => {
    const error = refusal(() => buildDesign('sales.csv', header, grid(undefined, (cells, t) => {
      if (t === 1) cells[3] = 'NaN';
      if (t === 7) cells[2] = '';
    }), base));
    expect(error.code).toBe('invalid_value');
    expect(error.places).toEqual([
      expect.objectContaining({ line: 3, column: 'footfall' }),
      expect.objectContaining({ line: 9, column: 'sales', message: 'the value is blank' }),
    ]);
  });

  it('refuses an entity column with a single level', () => {
    const rows = grid().map((cells) => ['only-shop', ...cells.slice(1)]);
    const error = refusal(() => buildDesign('sales.csv', header, rows, base));
    expect(error.code).toBe('single_level');
    expect(error.message).toMatch(/"shop" has a single level/);
  });

  it('refuses a rank the data cannot support', () => {
    // 6 × 5 entities: rank at most 4 by the min(I, J) − 1 rule
    expect(refusal(() => buildDesign('sales.csv', header, grid(), { ...base, rank: 5 })).message).toMatch(/can be at most 4/);
    // 30 observations, 1 + 6 + 5 + 2 + 11·2 = 36 parameters at rank 2
    const error = refusal(() => buildDesign('sales.csv', header, grid(), { ...base, rank: 2 }));
    expect(error.code).toBe('rank_too_large');
    expect(error.message).toMatch(/36 parameters for 30 observations; with these entities the rank can be at most 1/);
    expect(() => checkRank('t', 300, 100, 0, 30000, 5)).not.toThrow();
  });

  it('refuses unknown columns and ragged rows', () => {
    expect(refusal(() => buildDesign('sales.csv', header, grid(), { ...base, outcome: 'revenue' })).code).toBe('unknown_column');
    const rows = grid();
    rows[5] = rows[5]?.slice(0, 3) ?? [];
    const error = refusal(() => buildDesign('sales.csv', header, rows, base));
    expect(error.code).toBe('ragged_rows');
    expect(error.places[0]?.line).toBe(7);
  });

  it('warns of perfect separation for Bernoulli (an entity with only 1s, a covariate that splits the classes)', () => {
    // s1's five outcomes are all 1; the others alternate, so footfall splits nothing
    const design = buildDesign('sales.csv', header, grid((t) => (t < 5 ? '1' : String(t % 2))), { ...base, likelihood: 'bernoulli' });
    expect(design.warnings.some((w) => /Perfect separation/.test(w) && /"s1"/.test(w))).toBe(true);
    const split = buildDesign('sales.csv', header, grid((t) => (t >= 15 ? '1' : '0')), { ...base, likelihood: 'bernoulli' });
    expect(split.warnings.some((w) => /covariate "footfall" splits/.test(w))).toBe(true);
  });

  it('streams a file through the import module’s parser with the same result', async () => {
    const dir = mkdtempSync(path.join(tmpdir(), 'fit-'));
    const file = path.join(dir, 'sales.csv');
    const rows = grid();
    writeFileSync(file, [header, ...rows].map((cells) => cells.join(',')).join('\n') + '\n');
    const streamed = await readObservationFile({ path: file, name: 'sales.csv' }, base);
    const direct = buildDesign('sales.csv', header, rows, base);
    expect(streamed.rowIds).toEqual(direct.rowIds);
    expect(Array.from(streamed.y)).toEqual(Array.from(direct.y));
    expect(Array.from(streamed.x)).toEqual(Array.from(direct.x));
  });
});

describe('fitSettingsSchema', () => {
  it('accepts the API’s settings and fills defaults', () => {
    const parsed = fitSettingsSchema.parse({ rowColumn: 'shop', columnColumn: 'category', outcome: 'sales', likelihood: 'poisson', rank: 4, offset: 'footfall', offsetScale: 'exposure' });
    const resolved = resolveFitSettings(parsed);
    expect(resolved).toMatchObject({ method: 'map', folds: 5, hierarchical: false, priorScale: 1, draws: 200, covariates: [] });
  });
  it('refuses a rank outside 1–64, unknown fields and the same column twice', () => {
    const ok = { rowColumn: 'shop', columnColumn: 'category', outcome: 'sales', likelihood: 'gaussian', rank: 2 };
    expect(fitSettingsSchema.safeParse({ ...ok, rank: 65 }).success).toBe(false);
    expect(fitSettingsSchema.safeParse({ ...ok, rank: 0 }).success).toBe(false);
    expect(fitSettingsSchema.safeParse({ ...ok, colour: 'red' }).success).toBe(false);
    expect(fitSettingsSchema.safeParse({ ...ok, columnColumn: 'shop' }).success).toBe(false);
    expect(fitSettingsSchema.safeParse({ ...ok, folds: 1 }).success).toBe(false);
    expect(fitSettingsSchema.safeParse({ ...ok, folds: 0 }).success).toBe(true);
  });
});
