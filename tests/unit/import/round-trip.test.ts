/**
 * Every format round-trips: random float32 matrices written by tests/support/import-writers.ts and
 * parsed back must be bit-identical (compared as Uint32 bit patterns).
 */
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { parseFactorFile } from '@/lib/import/parse';
import { writeDrawsLong, writeDrawsWide, writeJson, writeLongCsv, writeNpy, writeWideCsv } from '@/tests/support/import-writers';
import { LIMITS, drawsArb, expectSameFloats, matrixArb, tempFolder } from './helpers';

const tmp = tempFolder();
afterAll(() => tmp.cleanup());
const RUNS = { numRuns: Number(process.env.IMPORT_RUNS ?? 40) };

describe('delimited-wide round trip', () => {
  it('keeps ids and float32 bits for every delimiter, header, line ending, BOM and quoting', async () => {
    await fc.assert(
      fc.asyncProperty(
        matrixArb,
        fc.record({
          delimiter: fc.constantFrom(',' as const, '\t' as const, ';' as const),
          header: fc.boolean(),
          crlf: fc.boolean(),
          bom: fc.boolean(),
          quoteAll: fc.boolean(),
          numberStyle: fc.constantFrom('shortest' as const, 'precision9' as const),
        }),
        async (matrix, options) => {
          const path = writeWideCsv(tmp.path('wide.csv'), matrix, options);
          const parsed = await parseFactorFile({ path, name: 'wide.csv' }, {}, LIMITS);
          expect(parsed.format).toBe('delimited-wide');
          expect(parsed.ids).toEqual(matrix.ids);
          expect(parsed.dims).toBe(matrix.dims);
          expectSameFloats(parsed.values, matrix.values);
          expect(parsed.draws).toBeNull();
          expect(parsed.metadataColumns).toEqual([]);
        },
      ),
      RUNS,
    );
  });

  it('numbers entities 1..N when there is neither a header nor an id column', async () => {
    await fc.assert(
      fc.asyncProperty(matrixArb, fc.constantFrom(',' as const, '\t' as const, ';' as const), fc.boolean(), async (matrix, delimiter, header) => {
        const path = writeWideCsv(tmp.path('noid.csv'), matrix, { delimiter, header, idColumn: false });
        const parsed = await parseFactorFile({ path, name: 'noid.txt' }, {}, LIMITS);
        expect(parsed.ids).toEqual(matrix.ids.map((_, i) => String(i + 1)));
        expectSameFloats(parsed.values, matrix.values);
      }),
      RUNS,
    );
  });
});

describe('delimited-long round trip', () => {
  it('rebuilds the matrix from entity, dimension, value triples', async () => {
    await fc.assert(
      fc.asyncProperty(matrixArb, fc.constantFrom(',' as const, '\t' as const, ';' as const), fc.boolean(), async (matrix, delimiter, crlf) => {
        const path = writeLongCsv(tmp.path('long.csv'), matrix, { delimiter, crlf, bom: crlf });
        const parsed = await parseFactorFile({ path, name: 'long.csv' }, {}, LIMITS);
        expect(parsed.format).toBe('delimited-long');
        expect(parsed.ids).toEqual(matrix.ids);
        expect(parsed.dims).toBe(matrix.dims);
        expectSameFloats(parsed.values, matrix.values);
      }),
      RUNS,
    );
  });
});

describe('draws-wide round trip', () => {
  it('reads name[i,k] and name.i.k columns, ignoring bookkeeping, with a partner parameter', async () => {
    await fc.assert(
      fc.asyncProperty(
        drawsArb,
        fc.integer({ min: 1, max: 5 }),
        fc.constantFrom('bracket' as const, 'dot' as const),
        fc.boolean(),
        async (main, partnerRows, spelling, bookkeeping) => {
          const partnerDraws = Float32Array.from({ length: main.drawCount * partnerRows * main.dims }, (_, i) => Math.fround(i * 0.1 - 1));
          const path = writeDrawsWide(
            tmp.path('draws.csv'),
            [
              { name: 'gamma', rows: main.ids.length, dims: main.dims, draws: main.draws },
              { name: 'delta', rows: partnerRows, dims: main.dims, draws: partnerDraws },
            ],
            main.drawCount,
            { spelling, bookkeeping },
          );
          const parsed = await parseFactorFile({ path, name: 'fit.csv' }, { parameter: 'gamma', partnerParameter: 'delta' }, LIMITS);
          expect(parsed.format).toBe('draws-wide');
          expect(parsed.parameters).toEqual(['gamma', 'delta']);
          expect(parsed.ids).toEqual(main.ids.map((_, i) => String(i + 1)));
          expect(parsed.values).toBeNull();
          expect(parsed.drawCount).toBe(main.drawCount);
          expectSameFloats(parsed.draws, main.draws);
          expect(parsed.partner?.parameter).toBe('delta');
          expect(parsed.partner?.ids.length).toBe(partnerRows);
          expect(parsed.partner?.drawCount).toBe(main.drawCount);
          expectSameFloats(parsed.partner?.draws ?? null, partnerDraws);
        },
      ),
      RUNS,
    );
  });

  it('picks the only matrix parameter without being told', async () => {
    await fc.assert(
      fc.asyncProperty(drawsArb, fc.constantFrom('bracket' as const, 'dot' as const), async (main, spelling) => {
        const path = writeDrawsWide(tmp.path('one.csv'), [{ name: 'theta', rows: main.ids.length, dims: main.dims, draws: main.draws }], main.drawCount, { spelling, bookkeeping: true, delimiter: '\t' });
        const parsed = await parseFactorFile({ path, name: 'one.tsv' }, {}, LIMITS);
        expect(parsed.parameters).toEqual(['theta']);
        expectSameFloats(parsed.draws, main.draws);
      }),
      { numRuns: 20 },
    );
  });
});

describe('draws-long round trip', () => {
  it('rebuilds D×N×K from draw, entity, dimension, value rows', async () => {
    await fc.assert(
      fc.asyncProperty(drawsArb, fc.boolean(), async (fixture, crlf) => {
        const path = writeDrawsLong(tmp.path('draws-long.csv'), fixture, { crlf });
        const parsed = await parseFactorFile({ path, name: 'draws-long.csv' }, {}, LIMITS);
        expect(parsed.format).toBe('draws-long');
        expect(parsed.ids).toEqual(fixture.ids);
        expect(parsed.drawCount).toBe(fixture.drawCount);
        expect(parsed.values).toBeNull();
        expectSameFloats(parsed.draws, fixture.draws);
      }),
      RUNS,
    );
  });
});

describe('npy round trip', () => {
  it('reads f4 and f8, C and Fortran order, 2-D and 3-D, format versions 1 to 3', async () => {
    await fc.assert(
      fc.asyncProperty(
        drawsArb,
        fc.boolean(),
        fc.constantFrom('<f4', '<f8'),
        fc.boolean(),
        fc.constantFrom(1 as const, 2 as const, 3 as const),
        async (fixture, threeD, dtype, fortran, version) => {
          const n = fixture.ids.length;
          const shape = threeD ? [fixture.drawCount, n, fixture.dims] : [n, fixture.dims];
          const data = threeD ? fixture.draws : fixture.draws.slice(0, n * fixture.dims);
          const path = writeNpy(tmp.path('m.npy'), data, shape, { dtype, fortran, version });
          const parsed = await parseFactorFile({ path, name: 'factors.npy' }, {}, LIMITS);
          expect(parsed.format).toBe('npy');
          expect(parsed.ids).toEqual(Array.from({ length: n }, (_, i) => String(i + 1)));
          expect(parsed.dims).toBe(fixture.dims);
          if (threeD) {
            expect(parsed.values).toBeNull();
            expect(parsed.drawCount).toBe(fixture.drawCount);
            expectSameFloats(parsed.draws, data);
          } else {
            expect(parsed.draws).toBeNull();
            expectSameFloats(parsed.values, data);
          }
        },
      ),
      RUNS,
    );
  });
});

describe('json round trip', () => {
  it('reads values, draws with values, and draws alone', async () => {
    await fc.assert(
      fc.asyncProperty(drawsArb, fc.constantFrom('values', 'both', 'draws'), async (fixture, variant) => {
        const n = fixture.ids.length;
        const values = fixture.draws.slice(0, n * fixture.dims).map((v) => Math.fround(v * 0.5));
        const path = writeJson(tmp.path('f.json'), {
          ids: fixture.ids,
          dims: fixture.dims,
          ...(variant !== 'draws' ? { values } : {}),
          ...(variant !== 'values' ? { draws: fixture.draws, drawCount: fixture.drawCount } : {}),
          labels: fixture.ids.map((id, i) => (i % 2 ? `label ${id}` : null)),
        });
        const parsed = await parseFactorFile({ path, name: 'f.json' }, {}, LIMITS);
        expect(parsed.format).toBe('json');
        expect(parsed.ids).toEqual(fixture.ids);
        expect(parsed.labels).toEqual(fixture.ids.map((id, i) => (i % 2 ? `label ${id}` : null)));
        if (variant === 'draws') expect(parsed.values).toBeNull();
        else expectSameFloats(parsed.values, values);
        if (variant === 'values') expect(parsed.draws).toBeNull();
        else {
          expect(parsed.drawCount).toBe(fixture.drawCount);
          expectSameFloats(parsed.draws, fixture.draws);
        }
      }),
      RUNS,
    );
  });
});

describe('float32 text', () => {
  it('reads back the extremes bit-identically: -0, the smallest subnormal, the largest finite float32', async () => {
    const values = Float32Array.from([-0, 0, 1.401298464324817e-45, -1.401298464324817e-45, 3.4028234663852886e38, -3.4028234663852886e38, 1.1754943508222875e-38, 0.1]);
    // fc.float covers these too; this pins them whatever the random seed
    const ids = Array.from(values, (_, i) => `e${i}`);
    for (const numberStyle of ['shortest', 'precision9'] as const) {
      const path = writeWideCsv(tmp.path('extremes.csv'), { ids, dims: 1, values }, { numberStyle });
      const parsed = await parseFactorFile({ path, name: 'extremes.csv' }, {}, LIMITS);
      expectSameFloats(parsed.values, values);
    }
  });
});
