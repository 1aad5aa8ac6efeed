import { readFileSync, writeFileSync } from 'node:fs';
import { afterAll, describe, expect, it } from 'vitest';
import { detectFormat, parseFactorFile } from '@/lib/import/parse';
import { writeNpy } from '@/tests/support/import-writers';
import { LIMITS, tempFolder } from './helpers';

const tmp = tempFolder();
afterAll(() => tmp.cleanup());
const head = (text: string): Buffer => Buffer.from(text, 'utf8');

function file(name: string, content: string | Buffer): { path: string; name: string } {
  const path = tmp.path(name);
  writeFileSync(path, content);
  return { path, name };
}

describe('detectFormat', () => {
  it('knows .npy by its magic bytes whatever the name, and by name', () => {
    const path = writeNpy(tmp.path('a.npy'), new Float32Array(4), [2, 2]);
    const bytes = readFileSync(path);
    expect(detectFormat('upload.bin', bytes)).toBe('npy');
    expect(detectFormat('factors.NPY', head('garbage'))).toBe('npy');
  });

  it('knows JSON by a leading brace (after a BOM and blank space) or by name', () => {
    expect(detectFormat('f.txt', head('{"ids": ["a"], "values": [[1]]}'))).toBe('json');
    expect(detectFormat('f.txt', head('\uFEFF \r\n  {"ids": []}'))).toBe('json');
    expect(detectFormat('f.json', head('ids'))).toBe('json');
  });

  it('knows delimited-wide with comma, tab and semicolon, header or not', () => {
    expect(detectFormat('f.csv', head('id,f1,f2\na,1,2\nb,3,4\n'))).toBe('delimited-wide');
    expect(detectFormat('f.tsv', head('a\t1\t2\nb\t3\t4\n'))).toBe('delimited-wide');
    expect(detectFormat('f.csv', head('"",V1,V2\r\n"x",0.5,1\r\n'))).toBe('delimited-wide');
    expect(detectFormat('f.csv', head('shop;f1;f2\nx;0.5;1\n'))).toBe('delimited-wide');
  });

  it('knows delimited-long by a three-column header naming entity, dimension and value', () => {
    expect(detectFormat('f.csv', head('entity,dimension,value\na,1,0.5\n'))).toBe('delimited-long');
    expect(detectFormat('f.csv', head('id;k;value\na;1;0.5\n'))).toBe('delimited-long');
    expect(detectFormat('f.tsv', head('Entity ID\tFactor\tEstimate\na\tF1\t0.5\n'))).toBe('delimited-long');
    // three columns without such names are a wide file with two dimensions
    expect(detectFormat('f.csv', head('shop,x1,x2\na,1,0.5\n'))).toBe('delimited-wide');
  });

  it('knows draws-long by four columns naming draw, entity, dimension and value', () => {
    expect(detectFormat('f.csv', head('draw,entity,dim,value\n1,a,1,0.5\n'))).toBe('draws-long');
    expect(detectFormat('f.csv', head('.draw,id,factor,value\n1,a,1,0.5\n'))).toBe('draws-long');
  });

  it('knows draws-wide by name[i,k] or name.i.k columns, after CmdStan comment lines', () => {
    expect(detectFormat('f.csv', head('lp__,"gamma[1,1]","gamma[2,1]"\n-1,0.1,0.2\n'))).toBe('draws-wide');
    expect(detectFormat('f.csv', head('chain,gamma.1.1,gamma.2.1\n1,0.1,0.2\n'))).toBe('draws-wide');
    expect(detectFormat('output.csv', head('# model = m\n# method = sample\nlp__,accept_stat__,theta.1.1\n-3,0.9,0.1\n'))).toBe('draws-wide');
  });

  it('sniffs a draws header longer than the 64 KiB head', () => {
    const columns = Array.from({ length: 9000 }, (_, i) => `"gamma[${i + 1},1]"`).join(',');
    expect(detectFormat('wide.csv', head(columns).subarray(0, 64 * 1024))).toBe('draws-wide');
  });
});

describe('layout detection and overrides', () => {
  it('takes R and pandas row names (an unnamed first column) as ids', async () => {
    const parsed = await parseFactorFile(file('r.csv', '"","V1","V2"\n"shop 1",0.5,1\n"shop 2",2,3\n'), {}, LIMITS);
    expect(parsed.ids).toEqual(['shop 1', 'shop 2']);
    expect(parsed.dims).toBe(2);
    const pandas = await parseFactorFile(file('p.csv', ',0,1\n0,0.5,1\n1,2,3\n'), {}, LIMITS);
    expect(pandas.ids).toEqual(['0', '1']);
    expect(pandas.dims).toBe(2);
  });

  it('takes a column named like an id anywhere, even holding integers', async () => {
    const parsed = await parseFactorFile(file('id.csv', 'f1,shop_id,f2\n0.5,17,1\n2,18,3\n'), {}, LIMITS);
    expect(parsed.ids).toEqual(['17', '18']);
    expect(Array.from(parsed.values ?? [])).toEqual([0.5, 1, 2, 3]);
  });

  it('takes a non-numeric first column as ids without a header, and numbers rows otherwise', async () => {
    const named = await parseFactorFile(file('n.csv', 'a,1,2\nb,3,4\n'), {}, LIMITS);
    expect(named.ids).toEqual(['a', 'b']);
    const numbered = await parseFactorFile(file('m.csv', '1,2\n3,4\n5,6\n'), {}, LIMITS);
    expect(numbered.ids).toEqual(['1', '2', '3']);
    expect(numbered.dims).toBe(2);
  });

  it('guesses the delimiter that reads the file without quote errors (a quoted id holding commas in a ";" file)', async () => {
    // Found by the round-trip property in CI: Papa Parse's own guess chose "," here and read one broken row.
    const parsed = await parseFactorFile(file('q.csv', '"a,b";0\nemoji 😀;0\n",";0\n:;0\n'), {}, LIMITS);
    expect(parsed.ids).toEqual(['a,b', 'emoji 😀', ',', ':']);
    expect(parsed.dims).toBe(1);
    const tabs = await parseFactorFile(file('t.tsv', 'id\tf1\tf2\n"x;y"\t1\t2\n"p,q"\t3\t4\n'), {}, LIMITS);
    expect(tabs.ids).toEqual(['x;y', 'p,q']);
    expect(tabs.dims).toBe(2);
  });

  it('honours idColumn, labelColumn, header, delimiter and format options', async () => {
    const f = file('o.csv', '1,2,3\n0.5,x,7\n0.25,y,8\n');
    const parsed = await parseFactorFile(f, { header: true, idColumn: '2', delimiter: ',' }, LIMITS);
    expect(parsed.ids).toEqual(['x', 'y']);
    expect(Array.from(parsed.values ?? [])).toEqual([0.5, 7, 0.25, 8]);
    const labelled = await parseFactorFile(file('l.csv', 'id,f1,name\na,1,Alpha\nb,2,\n'), { labelColumn: 'name' }, LIMITS);
    expect(labelled.labels).toEqual(['Alpha', null]);
    expect(labelled.metadataColumns).toEqual([]);
    // a wide-looking file read as long without a header, columns in entity, dimension, value order
    const long = await parseFactorFile(file('long.txt', 'a,1,0.5\na,2,0.25\nb,1,1\nb,2,2\n'), { format: 'delimited-long', header: false }, LIMITS);
    expect(long.ids).toEqual(['a', 'b']);
    expect(Array.from(long.values ?? [])).toEqual([0.5, 0.25, 1, 2]);
  });

  it('keeps numeric columns named in metadataColumns as metadata', async () => {
    const parsed = await parseFactorFile(file('meta.csv', 'id,f1,f2,footfall\na,1,2,300\nb,3,4,\n'), { metadataColumns: ['footfall'] }, LIMITS);
    expect(parsed.dims).toBe(2);
    expect(parsed.metadataColumns).toEqual([{ name: 'footfall', type: 'number' }]);
    expect(parsed.metadata).toEqual([[300], [null]]);
  });

  it('orders long dimensions by integer value and names by first appearance, entities by first appearance', async () => {
    const ints = await parseFactorFile(file('i.csv', 'entity,dimension,value\nb,2,4\nb,1,3\na,1,1\na,2,2\n'), {}, LIMITS);
    expect(ints.ids).toEqual(['b', 'a']);
    expect(Array.from(ints.values ?? [])).toEqual([3, 4, 1, 2]);
    const names = await parseFactorFile(file('n.csv', 'entity,factor,value\na,price,1\na,size,2\nb,size,4\nb,price,3\n'), {}, LIMITS);
    expect(Array.from(names.values ?? [])).toEqual([1, 2, 3, 4]);
  });

  it('reads a multi-byte character split across the 1 MiB read chunks', async () => {
    const filler = 'x'.repeat((1 << 20) - 'id,f1\n'.length - 1);
    const f = file('split.csv', `id,f1\n${filler}é,1\nb,2\n`);
    const parsed = await parseFactorFile(f, {}, { ...LIMITS, maxBytes: 4 << 20 });
    expect(parsed.ids).toEqual([`${filler}é`, 'b']);
  });

  it('keeps every row past the rows sampled for the layout, and their line numbers', async () => {
    const body = Array.from({ length: 1200 }, (_, i) => `e${i},${i},${-i}`).join('\n');
    const parsed = await parseFactorFile(file('long.csv', `id,f1,f2\n${body}\n`), {}, LIMITS);
    expect(parsed.ids).toHaveLength(1200);
    expect(parsed.ids[1199]).toBe('e1199');
    expect(parsed.values?.[2 * 1199 + 1]).toBe(-1199);
    const bad = await parseFactorFile(file('late.csv', `id,f1,f2\n${body}\ne1200,oops,1\n`), {}, LIMITS).catch((error: unknown) => error);
    expect(bad).toMatchObject({ code: 'invalid_value', places: [{ line: 1202, column: 'f1' }] });
  });
});
