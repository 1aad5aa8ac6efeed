/**
 * Writers for every import format, used by the parser tests and reusable by other tests and the
 * demo seed. They write what the tools analysts use would write (R's write.csv, pandas, CmdStan,
 * numpy.save, json.dumps), with switches for the variations the parsers must take.
 */
import { writeFileSync } from 'node:fs';

export interface MatrixFixture {
  ids: string[];
  dims: number;
  /** N×K row-major. */
  values: Float32Array;
  labels?: (string | null)[];
  /** Extra columns, written after the factor columns in wide files. */
  metadata?: { name: string; cells: string[] }[];
}

export interface DrawsFixture {
  ids: string[];
  dims: number;
  drawCount: number;
  /** D×N×K, draw-major then row-major. */
  draws: Float32Array;
}

export type NumberStyle = 'shortest' | 'precision9';

/**
 * Decimal text of a float32 that reads back to the same float32: JavaScript's shortest repr of its
 * double value, or 9 significant digits (enough for any float32). -0 keeps its sign.
 */
export function formatFloat(value: number, style: NumberStyle = 'shortest'): string {
  if (Object.is(value, -0)) return '-0';
  return style === 'precision9' ? value.toPrecision(9) : String(value);
}

export interface TextOptions {
  delimiter?: ',' | '\t' | ';';
  crlf?: boolean;
  bom?: boolean;
  /** Quote every text field, as R's write.csv does; otherwise only those that need it. */
  quoteAll?: boolean;
  numberStyle?: NumberStyle;
}

/** Quotes a field when it holds a delimiter, a quote or a line break (or always, with quoteAll). */
export function quoteField(field: string, quoteAll = false): string {
  if (quoteAll || /[",;\t\r\n]/.test(field) || field !== field.trim()) return `"${field.replace(/"/g, '""')}"`;
  return field;
}

function writeText(path: string, rows: string[][], options: TextOptions): string {
  const delimiter = options.delimiter ?? ',';
  const newline = options.crlf ? '\r\n' : '\n';
  const body = rows.map((row) => row.join(delimiter)).join(newline) + newline;
  writeFileSync(path, (options.bom ? '\uFEFF' : '') + body, 'utf8');
  return path;
}

export interface WideOptions extends TextOptions {
  header?: boolean;
  /** Write the id column (default true); without it the parser numbers entities 1..N. */
  idColumn?: boolean;
  /** Header of the id column (default "id"; R writes "", pandas "" too). */
  idHeader?: string;
  labelHeader?: string;
  dimHeader?: (k: number) => string;
}

/** Delimited-wide: id, label?, f1..fK, metadata... */
export function writeWideCsv(path: string, matrix: MatrixFixture, options: WideOptions = {}): string {
  const { ids, dims, values, labels, metadata = [] } = matrix;
  const withId = options.idColumn ?? true;
  const quoteAll = options.quoteAll ?? false;
  const rows: string[][] = [];
  if (options.header ?? true) {
    rows.push([
      ...(withId ? [quoteField(options.idHeader ?? 'id', quoteAll)] : []),
      ...(labels ? [quoteField(options.labelHeader ?? 'label', quoteAll)] : []),
      ...Array.from({ length: dims }, (_, k) => quoteField(options.dimHeader?.(k) ?? `f${k + 1}`, quoteAll)),
      ...metadata.map((column) => quoteField(column.name, quoteAll)),
    ]);
  }
  ids.forEach((id, i) => {
    rows.push([
      ...(withId ? [quoteField(id, quoteAll)] : []),
      ...(labels ? [quoteField(labels[i] ?? '', quoteAll)] : []),
      ...Array.from({ length: dims }, (_, k) => formatFloat(values[i * dims + k] ?? 0, options.numberStyle)),
      ...metadata.map((column) => quoteField(column.cells[i] ?? '', quoteAll)),
    ]);
  });
  return writeText(path, rows, options);
}

export interface LongOptions extends TextOptions {
  header?: string[] | null;
  /** Write rows in this order of (entity, dimension) pairs instead of entity by entity. */
  shuffle?: (count: number) => number[];
}

/** Delimited-long: entity, dimension (1-based), value. */
export function writeLongCsv(path: string, matrix: MatrixFixture, options: LongOptions = {}): string {
  const { ids, dims, values } = matrix;
  const header = options.header === undefined ? ['entity', 'dimension', 'value'] : options.header;
  const cells: string[][] = [];
  ids.forEach((id, i) => {
    for (let k = 0; k < dims; k++) cells.push([quoteField(id, options.quoteAll), String(k + 1), formatFloat(values[i * dims + k] ?? 0, options.numberStyle)]);
  });
  const order = options.shuffle?.(cells.length) ?? cells.map((_, at) => at);
  return writeText(path, [...(header ? [header] : []), ...order.map((at) => cells[at] ?? [])], options);
}

export interface DrawsWideParameter {
  name: string;
  rows: number;
  dims: number;
  /** D×rows×dims. */
  draws: Float32Array;
}

export interface DrawsWideOptions extends TextOptions {
  /** `name[i,k]` (Stan) or `name.i.k` (R's make.names). */
  spelling?: 'bracket' | 'dot';
  /** Add CmdStan's bookkeeping columns, a scalar and a 1-index parameter, and "#" comment lines. */
  bookkeeping?: boolean;
}

/** Draws-wide: one row per draw, parameter columns in Stan's column-major order (i varies fastest). */
export function writeDrawsWide(path: string, parameters: DrawsWideParameter[], drawCount: number, options: DrawsWideOptions = {}): string {
  const name = (p: string, i: number, k: number): string => (options.spelling === 'dot' ? `${p}.${i}.${k}` : `${p}[${i},${k}]`);
  const bookkeeping = options.bookkeeping ?? false;
  const lead = bookkeeping ? ['lp__', 'accept_stat__', 'stepsize__', 'treedepth__', 'n_leapfrog__', 'divergent__', 'energy__'] : [];
  const header = [...lead];
  const columns: { parameter: DrawsWideParameter; slot: number }[] = [];
  for (const parameter of parameters) {
    for (let k = 0; k < parameter.dims; k++) {
      for (let i = 0; i < parameter.rows; i++) {
        header.push(quoteField(name(parameter.name, i + 1, k + 1)));
        columns.push({ parameter, slot: i * parameter.dims + k });
      }
    }
  }
  if (bookkeeping) header.push('sigma', 'beta[1]', 'beta[2]', '.chain', '.iteration', '.draw');
  const rows: string[][] = [header];
  for (let d = 0; d < drawCount; d++) {
    const row = bookkeeping ? ['-12.5', '0.91', '0.3', '3', '7', '0', '15.2'] : [];
    for (const { parameter, slot } of columns) row.push(formatFloat(parameter.draws[d * parameter.rows * parameter.dims + slot] ?? 0, options.numberStyle));
    if (bookkeeping) row.push('1.5', '0.1', 'NaN', '1', String(d + 1), String(d + 1));
    rows.push(row);
  }
  if (bookkeeping) {
    rows.unshift(['# model = factor_model'], ['# method = sample (Default)']);
    rows.splice(3, 0, ['# Adaptation terminated']);
  }
  return writeText(path, rows, options);
}

/** Draws-long: draw (1-based), entity, dimension (1-based), value. */
export function writeDrawsLong(path: string, fixture: DrawsFixture, options: TextOptions & { header?: string[] } = {}): string {
  const { ids, dims, drawCount, draws } = fixture;
  const rows: string[][] = [options.header ?? ['draw', 'entity', 'dimension', 'value']];
  const n = ids.length;
  for (let d = 0; d < drawCount; d++) {
    ids.forEach((id, i) => {
      for (let k = 0; k < dims; k++) rows.push([String(d + 1), quoteField(id, options.quoteAll), String(k + 1), formatFloat(draws[(d * n + i) * dims + k] ?? 0, options.numberStyle)]);
    });
  }
  return writeText(path, rows, options);
}

export interface NpyOptions {
  /** '<f4' (default) or '<f8'; any other descr writes a header for refusal tests. */
  dtype?: string;
  fortran?: boolean;
  version?: 1 | 2 | 3;
}

/**
 * NumPy .npy as numpy.save writes it: magic, version, header length, a Python dict literal padded
 * with spaces and a newline to a multiple of 64 bytes, then the data. `data` is in C order; with
 * `fortran` it is written column-major. Other dtypes than <f4/<f8 write the header only (for
 * refusal tests) followed by zero bytes of the right length.
 */
export function writeNpy(path: string, data: Float32Array, shape: number[], options: NpyOptions = {}): string {
  const dtype = options.dtype ?? '<f4';
  const version = options.version ?? 1;
  const shapeText = shape.length === 1 ? `(${shape[0]},)` : `(${shape.join(', ')})`;
  let dict = `{'descr': '${dtype}', 'fortran_order': ${options.fortran ? 'True' : 'False'}, 'shape': ${shapeText}, }`;
  const prefix = version === 1 ? 10 : 12;
  const total = Math.ceil((prefix + dict.length + 1) / 64) * 64;
  dict = dict.padEnd(total - prefix - 1, ' ') + '\n';
  const head = Buffer.alloc(prefix);
  Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, version, 0]).copy(head);
  if (version === 1) head.writeUInt16LE(dict.length, 8);
  else head.writeUInt32LE(dict.length, 8);

  const itemSize = dtype.endsWith('8') ? 8 : dtype.endsWith('2') ? 2 : dtype.endsWith('1') ? 1 : 4;
  const count = shape.reduce((a, b) => a * b, 1);
  const body = Buffer.alloc(count * itemSize);
  if (dtype === '<f4' || dtype === '<f8') {
    for (let c = 0; c < count; c++) {
      // C index c → multi-index → Fortran position (first axis varies fastest)
      let position = c;
      if (options.fortran) {
        let rest = c;
        const index: number[] = [];
        for (let axis = shape.length - 1; axis >= 0; axis--) {
          const size = shape[axis] ?? 1;
          index[axis] = rest % size;
          rest = Math.floor(rest / size);
        }
        position = 0;
        for (let axis = shape.length - 1; axis >= 0; axis--) position = position * (shape[axis] ?? 1) + (index[axis] ?? 0);
      }
      const value = data[c] ?? 0;
      if (dtype === '<f4') body.writeFloatLE(value, position * 4);
      else body.writeDoubleLE(value, position * 8);
    }
  }
  writeFileSync(path, Buffer.concat([head, Buffer.from(dict, 'latin1'), body]));
  return path;
}

function jsonNumber(value: number): string {
  // JSON.stringify drops the sign of -0; JSON itself allows "-0"
  return Object.is(value, -0) ? '-0' : String(value);
}

function jsonMatrix(data: Float32Array, offset: number, rows: number, dims: number): string {
  const out: string[] = [];
  for (let i = 0; i < rows; i++) {
    const row: string[] = [];
    for (let k = 0; k < dims; k++) row.push(jsonNumber(data[offset + i * dims + k] ?? 0));
    out.push(`[${row.join(',')}]`);
  }
  return `[${out.join(',')}]`;
}

/** The JSON format (see lib/import/parse-json.ts): ids, values and/or draws, labels. */
export function writeJson(
  path: string,
  fixture: { ids: string[]; dims: number; values?: Float32Array; draws?: Float32Array; drawCount?: number; labels?: (string | null)[] },
): string {
  const n = fixture.ids.length;
  const parts = [`"ids":${JSON.stringify(fixture.ids)}`];
  if (fixture.values) parts.push(`"values":${jsonMatrix(fixture.values, 0, n, fixture.dims)}`);
  if (fixture.draws) {
    const draws: string[] = [];
    for (let d = 0; d < (fixture.drawCount ?? 0); d++) draws.push(jsonMatrix(fixture.draws, d * n * fixture.dims, n, fixture.dims));
    parts.push(`"draws":[${draws.join(',')}]`);
  }
  if (fixture.labels) parts.push(`"labels":${JSON.stringify(fixture.labels)}`);
  writeFileSync(path, `{${parts.join(',\n')}}\n`, 'utf8');
  return path;
}
