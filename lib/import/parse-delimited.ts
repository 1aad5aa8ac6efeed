import { isIdName } from './detect';
import { GrowableFloat32 } from './grow';
import type { RawColumn } from './metadata';
import { notFinite, PlaceCollector, plural, quoteCell, singleError, throwFirst } from './places';
import { columnNames, detectHeader, emptyError, resolveColumn, streamPlanned, type Row } from './rows';
import { isNumberLike, normalizeName, toFinite, type Delimiter } from './text';
import type { ImportLimits, ParseOptions, UploadedFile } from './types';

export interface WideResult {
  ids: string[];
  dims: number;
  values: Float32Array;
  labels: (string | null)[] | null;
  columns: RawColumn[];
}

interface WideLayout {
  header: string[] | null;
  width: number;
  names: (string | number)[];
  idColumn: number;
  labelColumn: number;
  factorColumns: number[];
  metaColumns: number[];
}

/**
 * Which columns are what, decided from the first rows:
 * - the id column is `idColumn`; else the first column whose header is named like an id (id,
 *   entity, name, key, index, "…_id", or the unnamed "" column R and pandas write for row names);
 *   else the first column when its values are not numbers; else there is none and ids are "1".."N";
 * - the label column is `labelColumn`, else a column named "label";
 * - a factor column is one where more than half of the sampled non-blank cells are numbers (finite,
 *   or a tool's spelling of NaN, Inf, NA) and at least one is finite:
 *   blanks, NaN, Inf and stray text in it are then reported as invalid values rather than the
 *   column silently turning into metadata and the matrix losing a dimension;
 * - every other column (and those in `metadataColumns`) is metadata.
 */
function planWide(file: string, sample: readonly Row[], options: ParseOptions, limits: ImportLimits): WideLayout {
  const first = sample[0];
  if (!first) throw emptyError(file, false);
  const hasHeader = options.header ?? detectHeader(sample);
  const header = hasHeader ? first.cells : null;
  const data = hasHeader ? sample.slice(1) : sample;
  if (data.length === 0) throw emptyError(file, hasHeader);
  const width = first.cells.length;
  const names = columnNames(width, header);

  const numericColumn = (column: number): boolean => {
    let finite = 0;
    let numberLike = 0;
    let filled = 0;
    for (const row of data) {
      const cell = row.cells[column] ?? '';
      if (cell.trim() === '') continue;
      filled += 1;
      if (!Number.isNaN(toFinite(cell))) finite += 1;
      if (isNumberLike(cell)) numberLike += 1;
    }
    return finite > 0 && numberLike * 2 > filled;
  };

  let idColumn = -1;
  if (options.idColumn !== undefined) idColumn = resolveColumn(file, options.idColumn, header, width, 'id column');
  else if (header) idColumn = header.findIndex(isIdName);
  if (idColumn < 0 && options.idColumn === undefined && width > 1 && !numericColumn(0)) idColumn = 0;

  let labelColumn = -1;
  if (options.labelColumn !== undefined) labelColumn = resolveColumn(file, options.labelColumn, header, width, 'label column');
  else if (header) labelColumn = header.findIndex((name, index) => index !== idColumn && normalizeName(name) === 'label');

  const forced = new Set((options.metadataColumns ?? []).map((spec) => resolveColumn(file, spec, header, width, 'metadata column')));
  const factorColumns: number[] = [];
  const metaColumns: number[] = [];
  for (let column = 0; column < width; column++) {
    if (column === idColumn || column === labelColumn) continue;
    if (!forced.has(column) && numericColumn(column)) factorColumns.push(column);
    else metaColumns.push(column);
  }
  if (factorColumns.length === 0) {
    throw singleError('no_numeric_columns', file, 'no column holds numbers, so there are no factor values (a factor column holds only numbers)');
  }
  if (factorColumns.length > limits.maxDims) {
    throw singleError('too_many_dims', file, `the file has ${factorColumns.length} factor columns, more than the limit of ${limits.maxDims} dimensions`, {
      line: first.line,
      column: names[factorColumns[limits.maxDims] ?? 0],
      message: 'first factor column beyond the limit',
    });
  }
  return { header, width, names, idColumn, labelColumn, factorColumns, metaColumns };
}

/** Delimited-wide: one row per entity. See planWide for how columns are told apart. */
export async function parseDelimitedWide(file: UploadedFile, delimiter: Delimiter, options: ParseOptions, limits: ImportLimits): Promise<WideResult> {
  const ids: string[] = [];
  const labels: (string | null)[] = [];
  const values = new GrowableFloat32(1 << 16);
  let metaCells: string[][] = [];
  const seen = new Map<string, number>();
  const ragged = new PlaceCollector('ragged_rows', file.name);
  const missing = new PlaceCollector('missing_ids', file.name);
  const invalid = new PlaceCollector('invalid_value', file.name);
  const duplicate = new PlaceCollector('duplicate_ids', file.name);
  let headerLine = 0;

  const layout = await streamPlanned<WideLayout>(
    file,
    delimiter,
    (sample) => {
      const planned = planWide(file.name, sample, options, limits);
      if (planned.header) headerLine = sample[0]?.line ?? 1;
      metaCells = planned.metaColumns.map(() => []);
      return planned;
    },
    (plan, { cells, line }) => {
      if (line === headerLine) return;
      if (cells.length !== plan.width) {
        ragged.add({ line, message: `expected ${plan.width} fields, found ${cells.length}` });
        return;
      }
      if (ids.length >= limits.maxRows) {
        throw singleError('too_many_rows', file.name, `the file has more than ${limits.maxRows} rows of factors, the limit`, { line, message: 'first row beyond the limit' });
      }
      let id = String(ids.length + 1);
      if (plan.idColumn >= 0) {
        id = cells[plan.idColumn] ?? '';
        if (id.trim() === '') missing.add({ line, column: plan.names[plan.idColumn], message: 'the id is blank' });
        else {
          const earlier = seen.get(id);
          if (earlier !== undefined) duplicate.add({ line, column: plan.names[plan.idColumn], message: `id ${quoteCell(id)} is already on line ${earlier}` });
          else seen.set(id, line);
        }
      }
      ids.push(id);
      const factorColumns = plan.factorColumns;
      const k = factorColumns.length;
      const out = values.reserve(k);
      let at = values.length;
      for (let c = 0; c < k; c++) {
        const column = factorColumns[c] ?? 0;
        const cell = cells[column] ?? '';
        const value = toFinite(cell);
        if (Number.isNaN(value) && !invalid.wants) invalid.tally();
        else if (Number.isNaN(value)) invalid.add({ line, column: plan.names[column], message: cell.trim() === '' ? 'the value is blank' : `${quoteCell(cell)} is not a finite number` });
        out[at++] = value;
      }
      values.length = at;
      if (plan.labelColumn >= 0) {
        const label = cells[plan.labelColumn] ?? '';
        labels.push(label.trim() === '' ? null : label);
      }
      for (let c = 0; c < plan.metaColumns.length; c++) metaCells[c]?.push(cells[plan.metaColumns[c] ?? 0] ?? '');
    },
  );

  throwFirst([
    [ragged, (n) => `${plural(n, 'row')} with the wrong number of fields (every row needs one field per column)`],
    [missing, (n) => `${plural(n, 'row')} without an id`],
    [invalid, (n) => `${notFinite(n, 'factor value')} (blank, NaN, Inf and text are refused in factor columns; mark a column as metadata if it is not a latent dimension)`],
    [duplicate, (n) => `${n === 1 ? '1 id appears' : `${n} ids appear`} more than once (ids must be unique)`],
  ]);
  if (ids.length === 0) throw emptyError(file.name, layout.header !== null);
  return {
    ids,
    dims: layout.factorColumns.length,
    values: values.toArray(),
    labels: layout.labelColumn >= 0 ? labels : null,
    columns: layout.metaColumns.map((column, c) => ({ name: String(layout.names[column]), cells: metaCells[c] ?? [] })),
  };
}
