import { classifyLongHeader, type LongColumns } from './detect';
import { GrowableFloat32, GrowableUint32 } from './grow';
import { PlaceCollector, plural, quoteCell, singleError, throwFirst } from './places';
import { columnNames, emptyError, streamPlanned } from './rows';
import { isNumberLike, toFinite, type Delimiter } from './text';
import type { ImportLimits, ParseOptions, UploadedFile } from './types';

export interface LongResult {
  ids: string[];
  dims: number;
  /** N×K without draws, D×N×K with them. */
  data: Float32Array;
  drawCount: number;
}

/**
 * Keys of a dimension or draw column in order. Integer keys ("1", "02", "3") are sorted by value,
 * whatever their spelling and order in the file; names keep the order they first appear in.
 */
class KeyIndex {
  private readonly index = new Map<string, number>();
  readonly keys: string[] = [];
  private allIntegers = true;

  constructor(
    private readonly what: string,
    private readonly limit: number,
    private readonly limitError: (line: number) => Error,
  ) {}

  lookup(cell: string, line: number): number {
    const trimmed = cell.trim();
    const integer = /^[+-]?\d+$/.test(trimmed);
    const key = integer ? String(Number(trimmed)) : trimmed;
    let at = this.index.get(key);
    if (at === undefined) {
      if (this.keys.length >= this.limit) throw this.limitError(line);
      at = this.keys.length;
      this.index.set(key, at);
      this.keys.push(key);
      if (!integer) this.allIntegers = false;
    }
    return at;
  }

  get size(): number {
    return this.keys.length;
  }

  /** Maps each first-appearance index to its final position. */
  order(): Uint32Array {
    const positions = this.keys.map((_, at) => at);
    if (this.allIntegers) positions.sort((a, b) => Number(this.keys[a]) - Number(this.keys[b]));
    const rank = new Uint32Array(this.keys.length);
    positions.forEach((at, position) => (rank[at] = position));
    return rank;
  }

  /** The key at a final position, for messages. */
  describe(rank: Uint32Array, position: number): string {
    const at = rank.indexOf(position);
    return `${this.what} ${this.keys[at] ?? position + 1}`;
  }
}

interface LongLayout {
  header: string[] | null;
  columns: LongColumns;
  width: number;
  names: (string | number)[];
}

/**
 * Delimited-long (`entity, dimension, value`) and draws-long (`draw, entity, dimension, value`).
 * Columns are found by header name (see classifyLongHeader), else taken in that order. Entities keep
 * the order they first appear in; every entity needs every dimension (in every draw) exactly once.
 */
export async function parseLong(file: UploadedFile, delimiter: Delimiter, options: ParseOptions, limits: ImportLimits, withDraws: boolean): Promise<LongResult> {
  const ids: string[] = [];
  const entityIndex = new Map<string, number>();
  const dims = new KeyIndex('dimension', limits.maxDims, (line) =>
    singleError('too_many_dims', file.name, `the file has more than ${limits.maxDims} distinct dimensions, the limit`, { line, message: 'first dimension beyond the limit' }),
  );
  const draws = new KeyIndex('draw', limits.maxDraws, (line) =>
    singleError('too_many_draws', file.name, `the file has more than ${limits.maxDraws} distinct draws, the limit`, { line, message: 'first draw beyond the limit' }),
  );
  const entityOf = new GrowableUint32();
  const dimOf = new GrowableUint32();
  const drawOf = new GrowableUint32();
  const lineOf = new GrowableUint32();
  const values = new GrowableFloat32(1 << 16);
  const ragged = new PlaceCollector('ragged_rows', file.name);
  const missing = new PlaceCollector('missing_ids', file.name);
  const invalid = new PlaceCollector('invalid_value', file.name);
  let headerLine = 0;

  const layout = await streamPlanned<LongLayout>(
    file,
    delimiter,
    (sample) => {
      const first = sample[0];
      if (!first) throw emptyError(file.name, false);
      const valueAt = withDraws ? 3 : 2;
      const hasHeader = options.header ?? !isNumberLike(first.cells[first.cells.length - 1] ?? first.cells[valueAt] ?? '');
      const header = hasHeader ? first.cells : null;
      const width = first.cells.length;
      const expected = withDraws ? 4 : 3;
      if (width < expected) {
        throw singleError('ragged_rows', file.name, `a ${withDraws ? 'draws-long' : 'long'} file needs ${expected} columns (${withDraws ? 'draw, ' : ''}entity, dimension, value), this one has ${width}`, {
          line: first.line,
          message: `${width} fields`,
        });
      }
      const columns = (header && classifyLongHeader(header, withDraws)) ?? (withDraws ? { draw: 0, entity: 1, dimension: 2, value: 3 } : { entity: 0, dimension: 1, value: 2 });
      if (hasHeader) headerLine = first.line;
      return { header, columns, width, names: columnNames(width, header) };
    },
    (plan, { cells, line }) => {
      if (line === headerLine) return;
      if (cells.length !== plan.width) {
        ragged.add({ line, message: `expected ${plan.width} fields, found ${cells.length}` });
        return;
      }
      const { columns, names } = plan;
      const id = cells[columns.entity] ?? '';
      if (id.trim() === '') {
        missing.add({ line, column: names[columns.entity], message: 'the entity id is blank' });
        return;
      }
      let entity = entityIndex.get(id);
      if (entity === undefined) {
        if (ids.length >= limits.maxRows) {
          throw singleError('too_many_rows', file.name, `the file has more than ${limits.maxRows} entities, the limit`, { line, message: `entity ${quoteCell(id)} is beyond the limit` });
        }
        entity = ids.length;
        entityIndex.set(id, entity);
        ids.push(id);
      }
      const dimCell = cells[columns.dimension] ?? '';
      if (dimCell.trim() === '') {
        invalid.add({ line, column: names[columns.dimension], message: 'the dimension is blank' });
        return;
      }
      let draw = 0;
      if (columns.draw !== undefined) {
        const drawCell = cells[columns.draw] ?? '';
        if (drawCell.trim() === '') {
          invalid.add({ line, column: names[columns.draw], message: 'the draw is blank' });
          return;
        }
        draw = draws.lookup(drawCell, line);
      }
      const cell = cells[columns.value] ?? '';
      const value = toFinite(cell);
      if (Number.isNaN(value)) invalid.add({ line, column: names[columns.value], message: cell.trim() === '' ? 'the value is blank' : `${quoteCell(cell)} is not a finite number` });
      entityOf.push(entity);
      dimOf.push(dims.lookup(dimCell, line));
      drawOf.push(draw);
      lineOf.push(line);
      values.push(value);
    },
  );

  throwFirst([
    [ragged, (n) => `${plural(n, 'row')} with the wrong number of fields`],
    [missing, (n) => `${plural(n, 'row')} without an entity id`],
    [invalid, (n) => `${plural(n, 'row')} with a blank or non-numeric cell (values must be finite numbers)`],
  ]);
  if (values.length === 0) throw emptyError(file.name, layout.header !== null);

  const n = ids.length;
  const k = dims.size;
  const d = withDraws ? draws.size : 1;
  const dimRank = dims.order();
  const drawRank = draws.order();
  const slots = d * n * k;
  if (slots > values.length && slots > 1 << 27) {
    // Too sparse to map slot by slot (and the gaps are certain): report the count only.
    const code = withDraws ? 'draw_shape_mismatch' : 'missing_cells';
    throw new PlaceCollector(code, file.name).toError(`at least ${slots - values.length} of the ${d}×${n}×${k} cells are missing`);
  }
  const data = new Float32Array(slots);
  // line + 1 of the row that filled each slot; 0 means still empty
  const filledBy = new Uint32Array(d * n * k);
  const duplicate = new PlaceCollector('duplicate_cells', file.name);
  const entities = entityOf.view();
  const dimensions = dimOf.view();
  const drawIndexes = drawOf.view();
  const lines = lineOf.view();
  const cellValues = values.toArray();
  const drawName = (position: number): string => (withDraws ? `${draws.describe(drawRank, position)}, ` : '');
  for (let cell = 0; cell < cellValues.length; cell++) {
    const drawPosition = withDraws ? (drawRank[drawIndexes[cell] ?? 0] ?? 0) : 0;
    const entity = entities[cell] ?? 0;
    const dimPosition = dimRank[dimensions[cell] ?? 0] ?? 0;
    const slot = (drawPosition * n + entity) * k + dimPosition;
    const line = lines[cell] ?? 0;
    const earlier = filledBy[slot] ?? 0;
    if (earlier > 0) {
      duplicate.add({
        line,
        message: `${drawName(drawPosition)}entity ${quoteCell(ids[entity] ?? '')}, ${dims.describe(dimRank, dimPosition)} is already given on line ${earlier - 1}`,
      });
      continue;
    }
    filledBy[slot] = line + 1;
    data[slot] = cellValues[cell] ?? 0;
  }
  const gaps = new PlaceCollector(withDraws ? 'draw_shape_mismatch' : 'missing_cells', file.name);
  const gapColumn = layout.names[layout.columns.entity];
  for (let slot = 0; slot < filledBy.length; slot++) {
    if (filledBy[slot] !== 0) continue;
    if (!gaps.wants) {
      gaps.tally();
      continue;
    }
    const dimPosition = slot % k;
    const entity = Math.floor(slot / k) % n;
    const drawPosition = Math.floor(slot / (n * k));
    gaps.add({ column: gapColumn, message: `${drawName(drawPosition)}entity ${quoteCell(ids[entity] ?? '')} has no value for ${dims.describe(dimRank, dimPosition)}` });
  }
  throwFirst([
    [duplicate, (count) => `${plural(count, 'cell')} given more than once (each ${withDraws ? 'draw, ' : ''}entity and dimension exactly once)`],
    [
      gaps,
      (count) =>
        withDraws
          ? `the draws do not all have the same shape: ${plural(count, 'cell')} of the ${d}×${n}×${k} draws × entities × dimensions are missing`
          : `${plural(count, 'cell')} of the ${n}×${k} entities × dimensions matrix are missing`,
    ],
  ]);
  return { ids, dims: k, data, drawCount: withDraws ? d : 0 };
}
