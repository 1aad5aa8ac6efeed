import { writeFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { inferType } from '@/lib/import/metadata';
import { parseFactorFile } from '@/lib/import/parse';
import { writeNpy, writeWideCsv } from '@/tests/support/import-writers';
import { LIMITS, importError, tempFolder } from './helpers';

const tmp = tempFolder();
afterAll(() => tmp.cleanup());

function write(name: string, content: string): { path: string; name: string } {
  const path = tmp.path(name);
  writeFileSync(path, content);
  return { path, name };
}

describe('metadata type inference', () => {
  it('tells number, date and category apart; empty cells do not decide', () => {
    expect(inferType(['1', '2.5', '', '-3e4'])).toBe('number');
    expect(inferType(['2024-01-31', '', '2023-02-28'])).toBe('date');
    expect(inferType(['2024-01-31T10:15:00Z', '2024-02-01T08:00:00.250+01:00', '2024-03-01'])).toBe('date');
    // Date.parse would roll 30 February over to March; it is not a date
    expect(inferType(['2023-02-30'])).toBe('category');
    expect(inferType(['2024-01-31', 'soon'])).toBe('category');
    expect(inferType(['1', 'NaN'])).toBe('category');
    expect(inferType(['north', 'south'])).toBe('category');
    expect(inferType(['', ''])).toBe('category');
  });

  it('keeps text columns of a wide file as typed metadata, with null for empty cells, and labels', async () => {
    const path = writeWideCsv(tmp.path('shops.csv'), {
      ids: ['s1', 's2', 's3'],
      dims: 2,
      values: Float32Array.from([1, 2, 3, 4, 5, 6]),
      labels: ['Campus Books', '', 'Harbour Reads'],
      metadata: [
        { name: 'region', cells: ['north', 'south', ''] },
        { name: 'opened', cells: ['2019-04-01', '', '2021-11-30'] },
        { name: 'seats', cells: ['twelve', 'eight', '20'] },
      ],
    });
    const parsed = await parseFactorFile({ path, name: 'shops.csv' }, {}, LIMITS);
    expect(parsed.dims).toBe(2);
    expect(parsed.labels).toEqual(['Campus Books', null, 'Harbour Reads']);
    expect(parsed.metadataColumns).toEqual([
      { name: 'region', type: 'category' },
      { name: 'opened', type: 'date' },
      { name: 'seats', type: 'category' },
    ]);
    expect(parsed.metadata).toEqual([
      ['north', '2019-04-01', 'twelve'],
      ['south', null, 'eight'],
      [null, '2021-11-30', '20'],
    ]);
  });
});

describe('labels file joined by id', () => {
  it('adds labels and metadata and warns about ids found in only one file', async () => {
    const factors = write('factors.csv', 'id,f1\na,1\nb,2\nc,3\nd,4\n');
    const labels = write('labels.csv', 'id,label,region,footfall\nb,Bee,north,120\nc,,south,\nx,Ex,east,5\n');
    const parsed = await parseFactorFile(factors, {}, LIMITS, labels);
    expect(parsed.labels).toEqual([null, 'Bee', null, null]);
    expect(parsed.metadataColumns).toEqual([
      { name: 'region', type: 'category' },
      { name: 'footfall', type: 'number' },
    ]);
    expect(parsed.metadata).toEqual([
      [null, null],
      ['north', 120],
      ['south', null],
      [null, null],
    ]);
    expect(parsed.warnings).toEqual(['2 ids in factors.csv have no row in labels.csv: "a", "d".', '1 id in labels.csv is not in factors.csv and was ignored: "x".']);
  });

  it('lists the first 20 unmatched ids and counts the rest', async () => {
    const ids = Array.from({ length: 25 }, (_, i) => `e${i + 1}`);
    const path = writeNpy(tmp.path('m.npy'), new Float32Array(25 * 2), [25, 2]);
    // the npy entities are "1".."25"; this labels file names none of them
    const labels = write('names.tsv', `entity\tname\n${ids.map((id) => `${id}\t${id.toUpperCase()}`).join('\n')}\n`);
    const parsed = await parseFactorFile({ path, name: 'm.npy' }, {}, LIMITS, labels);
    expect(parsed.labels).toEqual(new Array(25).fill(null));
    expect(parsed.warnings[0]).toMatch(/^25 ids in m\.npy have no row in names\.tsv: "1", "2", .*"20", and 5 more\.$/);
    expect(parsed.warnings[1]).toContain('25 ids in names.tsv are not in m.npy');
  });

  it('takes the column after the id as the label when none is named "label", and joins npy ids', async () => {
    const path = writeNpy(tmp.path('n.npy'), new Float32Array(4), [2, 2]);
    const labels = write('l.csv', 'id,name,opened\n2,Second,2020-01-01\n1,First,2021-06-15T12:00:00Z\n');
    const parsed = await parseFactorFile({ path, name: 'n.npy' }, {}, LIMITS, labels);
    expect(parsed.labels).toEqual(['First', 'Second']);
    expect(parsed.metadataColumns).toEqual([{ name: 'opened', type: 'date' }]);
    expect(parsed.metadata).toEqual([['2021-06-15T12:00:00Z'], ['2020-01-01']]);
    expect(parsed.warnings).toEqual([]);
  });

  it('refuses duplicate ids in the labels file, naming that file', async () => {
    const factors = write('f.csv', 'id,f1\na,1\n');
    const labels = write('dups.csv', 'id,label\na,A\na,B\n');
    const error = await importError(parseFactorFile(factors, {}, LIMITS, labels));
    expect(error.code).toBe('duplicate_ids');
    expect(error.file).toBe('dups.csv');
    expect(error.places[0]).toMatchObject({ file: 'dups.csv', line: 3, column: 'id' });
  });
});
