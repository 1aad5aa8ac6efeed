/**
 * JSON factor files.
 *
 *   {
 *     "ids":    ["shop-001", "shop-002", ...],        required: N unique, non-blank strings
 *                                                     (numbers are taken as their decimal text)
 *     "values": [[0.12, -1.5, ...], ...],             N rows of K finite numbers: point estimates
 *     "draws":  [[[0.11, -1.4, ...], ...], ...],      optional: D draws, each N rows of K numbers
 *     "labels": ["Campus Books", null, ...]           optional: N display labels (string or null)
 *   }
 *
 * At least one of "values" and "draws" must be there; with draws, "values" may be omitted (the
 * import aligns the draws and stores their mean). Other keys are ignored. JSON has no NaN or
 * Infinity; Python's json.dumps writes them anyway unless allow_nan=False, and they are reported
 * with their byte offsets. Numbers are rounded to float32; write them with 9 significant digits (or
 * the shortest representation of the float32 value) and they come back bit-identical.
 *
 * Size cap: JSON.parse needs the whole document as one string, and V8 strings stop at about 512 MiB
 * (2^29 - 24 UTF-16 units), with the parsed arrays costing several times the text on top. So JSON
 * files over JSON_MAX_BYTES are refused; larger matrices should come as .npy or CSV, which are read
 * without one giant string.
 */
import { readFile } from 'node:fs/promises';
import { notFinite, PlaceCollector, plural, quoteCell, singleError } from './places';
import { decodeUtf8, formatBytes } from './text';
import { ImportError, type ImportLimits, type UploadedFile } from './types';

export const JSON_MAX_BYTES = 256 * 1024 * 1024;

export interface JsonResult {
  ids: string[];
  dims: number;
  values: Float32Array | null;
  draws: Float32Array | null;
  drawCount: number;
  labels: (string | null)[] | null;
}

function structure(file: string, summary: string, index?: string): ImportError {
  return singleError('json_bad_structure', file, summary, index ? { index, message: summary } : undefined);
}

/** Byte offset in the UTF-8 file of the UTF-16 position `position` in its decoded text. */
function byteOffsetOf(text: string, position: number): number {
  return Buffer.byteLength(text.slice(0, position), 'utf8');
}

/** Finds bare NaN / Infinity tokens outside strings, the usual reason a numeric JSON file does not parse. */
function findNonFiniteTokens(text: string, file: string): PlaceCollector {
  const found = new PlaceCollector('invalid_value', file);
  let inString = false;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (inString) {
      if (c === 92) i += 1; // backslash: skip the escaped character
      else if (c === 34) inString = false;
      continue;
    }
    if (c === 34) inString = true;
    else if (c === 78 && text.startsWith('NaN', i)) {
      if (found.wants) found.add({ byteOffset: byteOffsetOf(text, i), message: 'NaN' });
      else found.tally();
    } else if (c === 73 && text.startsWith('Infinity', i) && text.charCodeAt(i - 1) !== 45) {
      if (found.wants) found.add({ byteOffset: byteOffsetOf(text, i), message: 'Infinity' });
      else found.tally();
    } else if (c === 45 && text.startsWith('-Infinity', i)) {
      if (found.wants) found.add({ byteOffset: byteOffsetOf(text, i), message: '-Infinity' });
      else found.tally();
    }
  }
  return found;
}

function parseText(text: string, file: string): unknown {
  try {
    return JSON.parse(text) as unknown;
  } catch (error) {
    const nonFinite = findNonFiniteTokens(text, file);
    if (nonFinite.any) throw nonFinite.toError(`${plural(nonFinite.count, 'value')} ${nonFinite.count === 1 ? 'is' : 'are'} NaN or Infinity, which JSON does not allow (values must be finite numbers)`);
    const reason = error instanceof Error ? error.message : String(error);
    const position = /position (\d+)/.exec(reason)?.[1];
    throw singleError('json_syntax', file, `the file is not valid JSON (${reason})`, position === undefined ? undefined : { byteOffset: byteOffsetOf(text, Number(position)), message: 'syntax error' });
  }
}

interface Shape {
  rows: number;
  dims: number;
}

/**
 * Copies an N×K array of arrays into `out` at `base`, checking its shape against `expected` (taken
 * from the first row when absent) and every number. Returns the shape.
 */
function readMatrix(matrix: unknown, path: string, out: (shape: Shape) => Float32Array, base: number, expected: Shape | null, file: string, invalid: PlaceCollector, shapeCode: string): Shape {
  const mismatch = (summary: string, index: string): ImportError => singleError(shapeCode, file, summary, { index, message: summary });
  if (!Array.isArray(matrix)) throw structure(file, `${path} must be an array of rows`, path);
  const rows: unknown[] = matrix;
  const firstRow: unknown = rows[0];
  const shape: Shape = expected ?? { rows: rows.length, dims: Array.isArray(firstRow) ? firstRow.length : 0 };
  if (rows.length !== shape.rows) throw mismatch(`${path} has ${rows.length} rows, expected ${shape.rows}`, path);
  const target = out(shape);
  for (let i = 0; i < rows.length; i++) {
    const row: unknown = rows[i];
    if (!Array.isArray(row)) throw structure(file, `${path}[${i}] must be an array of ${shape.dims} numbers`, `${path}[${i}]`);
    const cells: unknown[] = row;
    if (cells.length !== shape.dims) throw mismatch(`${path}[${i}] has ${cells.length} numbers, expected ${shape.dims} (every row needs one per dimension)`, `${path}[${i}]`);
    for (let k = 0; k < cells.length; k++) {
      const value = cells[k];
      const stored = typeof value === 'number' ? Math.fround(value) : Number.NaN;
      if (!Number.isFinite(stored)) {
        if (!invalid.wants) invalid.tally();
        else invalid.add({ index: `${path}[${i}][${k}]`, message: typeof value === 'number' ? 'too large for float32' : `${quoteCell(JSON.stringify(value) ?? String(value))} is not a number` });
      }
      target[base + i * shape.dims + k] = stored;
    }
  }
  return shape;
}

export async function parseJson(file: UploadedFile, limits: ImportLimits, size: number): Promise<JsonResult> {
  if (size > JSON_MAX_BYTES) {
    throw singleError(
      'too_large',
      file.name,
      `the JSON file is ${formatBytes(size)}; JSON files are read whole and are limited to ${formatBytes(JSON_MAX_BYTES)}. Upload large matrices as .npy or CSV instead`,
    );
  }
  const text = decodeUtf8(await readFile(file.path), file.name);
  if (text.trim() === '') throw singleError('empty_file', file.name, 'the file is empty');
  const doc = parseText(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text, file.name);
  if (typeof doc !== 'object' || doc === null || Array.isArray(doc)) throw structure(file.name, 'the file must hold one JSON object with "ids" and "values" (or "draws")');
  const record = doc as Record<string, unknown>;
  const { ids: rawIds, values: rawValues, draws: rawDraws, labels: rawLabels } = record;

  if (rawIds === undefined) throw singleError('missing_ids', file.name, 'the object has no "ids" array; give one id per entity');
  if (!Array.isArray(rawIds)) throw structure(file.name, '"ids" must be an array of strings', 'ids');
  const idList: unknown[] = rawIds;
  const missing = new PlaceCollector('missing_ids', file.name);
  const duplicate = new PlaceCollector('duplicate_ids', file.name);
  const seen = new Map<string, number>();
  const ids = idList.map((raw, i) => {
    const id = typeof raw === 'string' ? raw : typeof raw === 'number' && Number.isFinite(raw) ? String(raw) : '';
    if (id.trim() === '') {
      missing.add({ index: `ids[${i}]`, message: raw === null || raw === undefined || typeof raw === 'string' ? 'the id is blank' : 'the id is not a string' });
      return id;
    }
    const earlier = seen.get(id);
    if (earlier !== undefined) duplicate.add({ index: `ids[${i}]`, message: `id ${quoteCell(id)} is already ids[${earlier}]` });
    else seen.set(id, i);
    return id;
  });
  if (missing.any) throw missing.toError(`${plural(missing.count, 'id')} ${missing.count === 1 ? 'is' : 'are'} blank or not strings`);
  if (duplicate.any) throw duplicate.toError(`${duplicate.count === 1 ? '1 id appears' : `${duplicate.count} ids appear`} more than once (ids must be unique)`);
  if (ids.length === 0) throw singleError('empty_file', file.name, '"ids" is empty; the file holds no entities');
  if (ids.length > limits.maxRows) throw singleError('too_many_rows', file.name, `the file has ${ids.length} entities, more than the limit of ${limits.maxRows}`);
  if (rawValues === undefined && rawDraws === undefined) throw structure(file.name, 'the object needs "values" (N×K) or "draws" (D×N×K)');

  const invalid = new PlaceCollector('invalid_value', file.name);
  const checkDims = (dims: number, path: string): void => {
    if (dims === 0) throw singleError('no_numeric_columns', file.name, `${path} has rows without numbers; each row needs one number per dimension`, { index: `${path}[0]`, message: 'empty row' });
    if (dims > limits.maxDims) throw singleError('too_many_dims', file.name, `the rows have ${dims} numbers, more than the limit of ${limits.maxDims} dimensions`);
  };
  let shape: Shape | null = null;
  // filled by the allocators below, once the first row tells the shape
  const store: { values: Float32Array | null; draws: Float32Array | null } = { values: null, draws: null };
  const allocateValues = (s: Shape): Float32Array => {
    checkDims(s.dims, 'values');
    store.values = new Float32Array(s.rows * s.dims);
    return store.values;
  };
  if (rawValues !== undefined) shape = readMatrix(rawValues, 'values', allocateValues, 0, null, file.name, invalid, 'json_bad_structure');
  let drawCount = 0;
  if (rawDraws !== undefined) {
    if (!Array.isArray(rawDraws)) throw structure(file.name, '"draws" must be an array of draws, each an array of rows', 'draws');
    const drawList: unknown[] = rawDraws;
    drawCount = drawList.length;
    if (drawCount === 0) throw singleError('empty_file', file.name, '"draws" is empty');
    if (drawCount > limits.maxDraws) throw singleError('too_many_draws', file.name, `the file has ${drawCount} draws, more than the limit of ${limits.maxDraws}`);
    drawList.forEach((draw, d) => {
      const allocate = (s: Shape): Float32Array => {
        if (!store.draws) {
          checkDims(s.dims, `draws[${d}]`);
          store.draws = new Float32Array(drawCount * s.rows * s.dims);
        }
        return store.draws;
      };
      const got = readMatrix(draw, `draws[${d}]`, allocate, shape ? d * shape.rows * shape.dims : 0, shape, file.name, invalid, 'draw_shape_mismatch');
      shape ??= got;
    });
  }
  if (invalid.any) throw invalid.toError(notFinite(invalid.count, 'value'));
  if (!shape) throw structure(file.name, 'the object needs "values" (N×K) or "draws" (D×N×K)');
  if (shape.rows !== ids.length) {
    throw structure(file.name, `"ids" has ${ids.length} entries but the matrix has ${shape.rows} rows; give one id per row`, 'ids');
  }

  let labels: (string | null)[] | null = null;
  if (rawLabels !== undefined && rawLabels !== null) {
    if (!Array.isArray(rawLabels) || rawLabels.length !== ids.length) throw structure(file.name, `"labels" must be an array of ${ids.length} strings or nulls, one per id`, 'labels');
    const labelList: unknown[] = rawLabels;
    labels = labelList.map((label) => (typeof label === 'string' && label.trim() !== '' ? label : typeof label === 'number' ? String(label) : null));
  }
  return { ids, dims: shape.dims, values: store.values, draws: store.draws, drawCount: store.draws ? drawCount : 0, labels };
}
