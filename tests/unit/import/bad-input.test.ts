/** Every kind of bad input: the stable code, the message, the first place, and the count past 20. */
import { closeSync, openSync, readFileSync, truncateSync, writeFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { parseFactorFile } from '@/lib/import/parse';
import { MAX_REPORTED_PLACES, type ImportLimits, type ParseOptions } from '@/lib/import/types';
import { writeDrawsWide, writeNpy } from '@/tests/support/import-writers';
import { LIMITS, importError, tempFolder } from './helpers';

const tmp = tempFolder();
afterAll(() => tmp.cleanup());

function write(name: string, content: string | Buffer): { path: string; name: string } {
  const path = tmp.path(name);
  writeFileSync(path, content);
  return { path, name };
}

function fails(name: string, content: string | Buffer, options: ParseOptions = {}, limits: ImportLimits = LIMITS) {
  return importError(parseFactorFile(write(name, content), options, limits));
}

const rows = (count: number, make: (i: number) => string): string => Array.from({ length: count }, (_, i) => make(i)).join('\n');

describe('empty files', () => {
  it('refuses a file of no bytes', async () => {
    const error = await fails('empty.csv', '');
    expect(error.code).toBe('empty_file');
    expect(error.message).toBe('empty.csv: the file is empty.');
    expect(error.file).toBe('empty.csv');
  });

  it('refuses blank lines only, a header without rows, and an npy array of no values', async () => {
    expect((await fails('blank.csv', '\n \r\n\n')).code).toBe('empty_file');
    const header = await fails('header.csv', 'id,f1,f2\n');
    expect(header.code).toBe('empty_file');
    expect(header.message).toContain('header but no data rows');
    const npy = await importError(parseFactorFile({ path: writeNpy(tmp.path('e.npy'), new Float32Array(0), [0, 3]), name: 'e.npy' }, {}, LIMITS));
    expect(npy.code).toBe('empty_file');
    expect(npy.message).toContain('shape (0, 3)');
  });
});

describe('structure', () => {
  it('no_numeric_columns: a wide file whose columns are all text', async () => {
    const error = await fails('text.csv', 'id,region\na,north\nb,south\n');
    expect(error.code).toBe('no_numeric_columns');
    expect(error.message).toMatch(/^text\.csv: no column holds numbers/);
  });

  it('ragged_rows: names the line (counting the header) and counts past the first 20', async () => {
    const body = `id,f1,f2\na,1,2\n${rows(25, (i) => `r${i},1`)}\n`;
    const error = await fails('ragged.csv', body);
    expect(error.code).toBe('ragged_rows');
    expect(error.message).toContain('ragged.csv: 25 rows with the wrong number of fields');
    expect(error.message).toContain('First at line 3: expected 3 fields, found 2.');
    expect(error.places[0]).toMatchObject({ file: 'ragged.csv', line: 3 });
    expect(error.places).toHaveLength(MAX_REPORTED_PLACES);
    expect(error.count).toBe(25);
  });

  it('unknown_column: an id column that is not there, listing the columns', async () => {
    const error = await fails('cols.csv', 'id,f1\na,1\n', { idColumn: 'shop' });
    expect(error.code).toBe('unknown_column');
    expect(error.message).toContain('"shop" is not a column of the file (columns: "id", "f1")');
  });
});

describe('invalid values', () => {
  it('names each of NaN, Inf, -Inf, blank and text by line and column header', async () => {
    const error = await fails('values.csv', 'id,f1,f2\na,1,2\nb,NaN,2\nc,1,Inf\nd,-Inf,1\ne,,1\nf,1,abc\n');
    expect(error.code).toBe('invalid_value');
    expect(error.count).toBe(5);
    expect(error.message).toContain('values.csv: 5 factor values are not finite numbers (blank, NaN, Inf and text are refused in factor columns');
    expect(error.places.map(({ line, column, message }) => [line, column, message])).toEqual([
      [3, 'f1', '"NaN" is not a finite number'],
      [4, 'f2', '"Inf" is not a finite number'],
      [5, 'f1', '"-Inf" is not a finite number'],
      [6, 'f1', 'the value is blank'],
      [7, 'f2', '"abc" is not a finite number'],
    ]);
  });

  it('uses 1-based column numbers without a header and counts every bad cell', async () => {
    const body = `${rows(10, (i) => `e${i},${i},1`)}\n${rows(30, (i) => `x${i},NaN,1`)}\n`;
    const error = await fails('many.csv', body);
    expect(error.code).toBe('invalid_value');
    expect(error.places[0]).toMatchObject({ file: 'many.csv', line: 11, column: 2 });
    expect(error.places).toHaveLength(MAX_REPORTED_PLACES);
    expect(error.count).toBe(30);
    expect(error.message).toContain('30 places in all; the first 20 are listed');
  });

  it('names the draw line and column in draws-wide files', async () => {
    const error = await fails('draws.csv', 'lp__,gamma.1.1,gamma.2.1\n-1,0.5,1\n-2,0.5,NA\n');
    expect(error.code).toBe('invalid_value');
    expect(error.places[0]).toMatchObject({ line: 3, column: 'gamma.2.1', message: '"NA" is not a finite number' });
  });

  it('gives byte offsets of NaN and Infinity in JSON', async () => {
    const text = '{"ids":["a","b"],"values":[[1,NaN],[Infinity,2]]}';
    const error = await fails('nan.json', text);
    expect(error.code).toBe('invalid_value');
    expect(error.count).toBe(2);
    expect(error.places[0]).toMatchObject({ byteOffset: text.indexOf('NaN'), message: 'NaN' });
    expect(error.message).toContain('JSON does not allow');
  });

  it('gives the array index of a non-number in JSON', async () => {
    const error = await fails('str.json', '{"ids":["a","b"],"values":[[1,2],[3,"4"]]}');
    expect(error.code).toBe('invalid_value');
    expect(error.places[0]).toMatchObject({ index: 'values[1][1]' });
  });

  it('gives the array index and byte offset of NaN in .npy data, counting past 20', async () => {
    const data = new Float32Array(60).fill(1);
    for (let i = 5; i < 30; i++) data[i] = Number.NaN;
    const path = writeNpy(tmp.path('nan.npy'), data, [20, 3]);
    const error = await importError(parseFactorFile({ path, name: 'nan.npy' }, {}, LIMITS));
    expect(error.code).toBe('invalid_value');
    expect(error.count).toBe(25);
    expect(error.places[0]).toMatchObject({ index: '[1, 2]', byteOffset: 128 + 5 * 4, message: 'NaN' });
  });
});

describe('ids', () => {
  it('duplicate_ids: names the repeat and where the id was first', async () => {
    const error = await fails('dup.csv', 'id,f1\na,1\nb,2\na,3\n');
    expect(error.code).toBe('duplicate_ids');
    expect(error.places[0]).toMatchObject({ file: 'dup.csv', line: 4, column: 'id', message: 'id "a" is already on line 2' });
    expect(error.message).toBe('dup.csv: 1 id appears more than once (ids must be unique). First at line 4, column "id": id "a" is already on line 2.');
  });

  it('missing_ids: a blank id cell, and JSON without ids', async () => {
    const error = await fails('blank-id.csv', 'id,f1\na,1\n  ,2\n');
    expect(error.code).toBe('missing_ids');
    expect(error.places[0]).toMatchObject({ line: 3, column: 'id', message: 'the id is blank' });
    const json = await fails('noids.json', '{"values":[[1]]}');
    expect(json.code).toBe('missing_ids');
    expect(json.message).toContain('no "ids" array');
  });
});

describe('shapes of draws and long files', () => {
  it('draw_shape_mismatch: an entity missing in one draw of a draws-long file', async () => {
    const error = await fails('dl.csv', 'draw,entity,dimension,value\n1,a,1,0.1\n1,b,1,0.2\n2,a,1,0.3\n');
    expect(error.code).toBe('draw_shape_mismatch');
    expect(error.count).toBe(1);
    expect(error.places[0]).toMatchObject({ file: 'dl.csv', column: 'entity', message: 'draw 2, entity "b" has no value for dimension 1' });
    expect(error.message).toContain('1 cell of the 2×2×1 draws × entities × dimensions are missing');
  });

  it('draw_shape_mismatch: a gap in the draws-wide indexes', async () => {
    const error = await fails('gap.csv', 'lp__,"g[1,1]","g[2,1]","g[1,2]"\n0,1,2,3\n');
    expect(error.code).toBe('draw_shape_mismatch');
    expect(error.places[0]).toMatchObject({ line: 1, message: 'no column for g[2,2]' });
    expect(error.message).toContain('do not form a full 2×2 matrix');
  });

  it('draw_shape_mismatch: JSON draws of different sizes', async () => {
    const error = await fails('d.json', '{"ids":["a"],"draws":[[[1,2]],[[1,2,3]]]}');
    expect(error.code).toBe('draw_shape_mismatch');
    expect(error.places[0]).toMatchObject({ index: 'draws[1][0]' });
  });

  it('missing_cells and duplicate_cells in a long file', async () => {
    const missing = await fails('l.csv', 'entity,dimension,value\na,1,1\na,2,2\nb,1,3\n');
    expect(missing.code).toBe('missing_cells');
    expect(missing.places[0]?.message).toBe('entity "b" has no value for dimension 2');
    const twice = await fails('l2.csv', 'entity,dimension,value\na,1,1\na,1,2\n');
    expect(twice.code).toBe('duplicate_cells');
    expect(twice.places[0]).toMatchObject({ line: 3, message: 'entity "a", dimension 1 is already given on line 2' });
  });

  it('parameter_required, unknown_parameter and partner_dims_mismatch in draws-wide files', async () => {
    const body = 'lp__,"a[1,1]","a[1,2]","b[1,1]"\n0,1,2,3\n';
    const choose = await fails('two.csv', body);
    expect(choose.code).toBe('parameter_required');
    expect(choose.message).toContain('several matrix parameters ("a", "b")');
    const unknown = await fails('two.csv', body, { parameter: 'c' });
    expect(unknown.code).toBe('unknown_parameter');
    const partner = await fails('two.csv', body, { parameter: 'a', partnerParameter: 'b' });
    expect(partner.code).toBe('partner_dims_mismatch');
    expect(partner.message).toContain('"b" has 1 dimensions but "a" has 2');
  });
});

describe('.npy headers and data', () => {
  it('npy_bad_header: wrong magic, at byte 0', async () => {
    const error = await fails('bad.npy', Buffer.from('not an npy file at all'));
    expect(error.code).toBe('npy_bad_header');
    expect(error.places[0]).toMatchObject({ byteOffset: 0, message: 'wrong magic' });
    expect(error.message).toContain('bad.npy: the file does not start with the .npy magic bytes');
  });

  it('npy_bad_header: a 1-D array', async () => {
    const path = writeNpy(tmp.path('v.npy'), new Float32Array(3), [3]);
    const error = await importError(parseFactorFile({ path, name: 'v.npy' }, {}, LIMITS));
    expect(error.code).toBe('npy_bad_header');
    expect(error.message).toContain('shape (3); it must be 2-D');
  });

  it('npy_unsupported_dtype: integers and big-endian floats', async () => {
    const ints = await importError(parseFactorFile({ path: writeNpy(tmp.path('i.npy'), new Float32Array(4), [2, 2], { dtype: '<i8' }), name: 'i.npy' }, {}, LIMITS));
    expect(ints.code).toBe('npy_unsupported_dtype');
    expect(ints.message).toContain("dtype is int64 (<i8); only float32 ('<f4') and float64 ('<f8')");
    const big = await importError(parseFactorFile({ path: writeNpy(tmp.path('b.npy'), new Float32Array(4), [2, 2], { dtype: '>f4' }), name: 'b.npy' }, {}, LIMITS));
    expect(big.code).toBe('npy_unsupported_dtype');
    expect(big.message).toContain('big-endian');
  });

  it('npy_truncated: data shorter than the shape says, at the byte where it ends', async () => {
    const path = writeNpy(tmp.path('t.npy'), new Float32Array(6), [2, 3]);
    const length = readFileSync(path).length;
    truncateSync(path, length - 4);
    const error = await importError(parseFactorFile({ path, name: 't.npy' }, {}, LIMITS));
    expect(error.code).toBe('npy_truncated');
    expect(error.places[0]).toMatchObject({ byteOffset: length - 4, message: 'data ends here' });
    expect(error.message).toContain('data is 20 bytes but shape (2, 3) of float32 needs 24');
  });
});

describe('limits', () => {
  const tight: ImportLimits = { maxBytes: 1 << 20, maxRows: 3, maxDims: 2, maxDraws: 2 };

  it('too_large: over the byte limit, before reading', async () => {
    const error = await fails('big.csv', 'id,f1\n' + rows(20, (i) => `e${i},1`), {}, { ...tight, maxBytes: 50 });
    expect(error.code).toBe('too_large');
    expect(error.message).toMatch(/^big\.csv: the file is \d+ bytes, more than the limit of 50 bytes/);
  });

  it('too_large: JSON over 256 MiB, which JSON.parse would need as one string', async () => {
    const path = tmp.path('huge.json');
    closeSync(openSync(path, 'w'));
    truncateSync(path, 257 * 1024 * 1024); // sparse: costs no disk
    const error = await importError(parseFactorFile({ path, name: 'huge.json' }, {}, { ...LIMITS, maxBytes: 1 << 30 }));
    expect(error.code).toBe('too_large');
    expect(error.message).toContain('JSON files are read whole and are limited to 256.0 MiB');
  });

  it('too_many_rows: at the first row beyond the limit', async () => {
    const error = await fails('rows.csv', 'id,f1\na,1\nb,2\nc,3\nd,4\ne,5\n', {}, tight);
    expect(error.code).toBe('too_many_rows');
    expect(error.places[0]).toMatchObject({ line: 5 });
    expect(error.message).toContain('more than 3 rows');
  });

  it('too_many_dims: more factor columns than allowed', async () => {
    const error = await fails('dims.csv', 'id,f1,f2,f3\na,1,2,3\n', {}, tight);
    expect(error.code).toBe('too_many_dims');
    expect(error.places[0]).toMatchObject({ line: 1, column: 'f3' });
  });

  it('too_many_draws: in draws-wide, draws-long and .npy', async () => {
    const draws = new Float32Array(3);
    const wide = await importError(
      parseFactorFile({ path: writeDrawsWide(tmp.path('dw.csv'), [{ name: 'g', rows: 1, dims: 1, draws }], 3), name: 'dw.csv' }, {}, tight),
    );
    expect(wide.code).toBe('too_many_draws');
    expect(wide.places[0]).toMatchObject({ line: 4 });
    const long = await fails('dl.csv', 'draw,entity,dimension,value\n1,a,1,0\n2,a,1,0\n3,a,1,0\n', {}, tight);
    expect(long.code).toBe('too_many_draws');
    expect(long.places[0]).toMatchObject({ line: 4 });
    const npy = await importError(parseFactorFile({ path: writeNpy(tmp.path('d.npy'), draws, [3, 1, 1]), name: 'd.npy' }, {}, tight));
    expect(npy.code).toBe('too_many_draws');
  });
});

describe('encoding', () => {
  it('bad_encoding: an invalid UTF-8 byte, at its offset', async () => {
    const bytes = Buffer.concat([Buffer.from('id,f1\na'), Buffer.from([0xff]), Buffer.from(',1\n')]);
    const error = await fails('latin.csv', bytes);
    expect(error.code).toBe('bad_encoding');
    expect(error.places[0]).toMatchObject({ file: 'latin.csv', byteOffset: 7 });
    expect(error.message).toContain('latin.csv: the file is not valid UTF-8');
  });

  it('bad_encoding: past the first read chunk, and a sequence cut off at the end', async () => {
    const filler = Buffer.from(`id,f1\n${'x'.repeat((1 << 20) + 100)},1\n`);
    const late = await fails('late.csv', Buffer.concat([filler, Buffer.from([0xc3, 0x28]), Buffer.from(',2\n')]), {}, { ...LIMITS, maxBytes: 4 << 20 });
    expect(late.code).toBe('bad_encoding');
    expect(late.places[0]?.byteOffset).toBe(filler.length);
    const cut = Buffer.concat([Buffer.from('id,f1\na,1\n'), Buffer.from([0xe2, 0x82])]);
    const end = await fails('cut.csv', cut);
    expect(end.places[0]?.byteOffset).toBe(cut.length - 2);
  });

  it('bad_encoding: a UTF-16 file, named as such', async () => {
    const error = await fails('utf16.csv', Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from('id,f1\n', 'utf16le')]));
    expect(error.code).toBe('bad_encoding');
    expect(error.message).toContain('UTF-16');
    expect(error.places[0]).toMatchObject({ byteOffset: 0 });
  });

  it('json_syntax: broken JSON, with the byte offset V8 reports', async () => {
    const error = await fails('broken.json', '{"ids": ["a"], "values": [[1 2]]}');
    expect(error.code).toBe('json_syntax');
    expect(error.places[0]?.byteOffset).toBe(29);
  });
});
