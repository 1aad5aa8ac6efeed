import { parseIndexedColumn } from './detect';
import { GrowableFloat32 } from './grow';
import { notFinite, PlaceCollector, plural, quoteCell, singleError, throwFirst } from './places';
import { emptyError, streamPlanned } from './rows';
import { toFinite, type Delimiter } from './text';
import type { ImportLimits, ParseOptions, UploadedFile } from './types';

export interface DrawsMatrix {
  parameter: string;
  rows: number;
  dims: number;
  /** D×N×K, draw-major then row-major. */
  draws: Float32Array;
}

export interface DrawsWideResult {
  parameters: string[];
  drawCount: number;
  main: DrawsMatrix;
  partner?: DrawsMatrix;
}

interface Target {
  parameter: string;
  rows: number;
  dims: number;
  /** For each file column, the slot i*K+k within one draw, or -1 when the column is not this parameter's. */
  slotOfColumn: Int32Array;
  out: GrowableFloat32;
}

/** Columns of one parameter by (i, k), checked to fill 1..N × 1..K exactly once. */
function planTarget(file: string, header: readonly string[], headerLine: number, parameter: string, limits: ImportLimits): Target {
  const cells: { column: number; i: number; k: number }[] = [];
  header.forEach((name, column) => {
    const parsed = parseIndexedColumn(name);
    if (parsed && parsed.parameter === parameter) cells.push({ column, i: parsed.i, k: parsed.k });
  });
  const shape = new PlaceCollector('draw_shape_mismatch', file);
  for (const cell of cells) {
    if (cell.i < 1 || cell.k < 1) shape.add({ line: headerLine, column: header[cell.column], message: 'indexes are 1-based; 0 is not an index' });
  }
  if (shape.any) throw shape.toError(`the columns of "${parameter}" must be indexed from 1`);
  const rows = Math.max(...cells.map((cell) => cell.i));
  const dims = Math.max(...cells.map((cell) => cell.k));
  if (rows > limits.maxRows) throw singleError('too_many_rows', file, `"${parameter}" has ${rows} rows (entities), more than the limit of ${limits.maxRows}`);
  if (dims > limits.maxDims) throw singleError('too_many_dims', file, `"${parameter}" has ${dims} dimensions, more than the limit of ${limits.maxDims}`);
  const slotOfColumn = new Int32Array(header.length).fill(-1);
  const columnOfSlot = new Int32Array(rows * dims).fill(-1);
  for (const { column, i, k } of cells) {
    const slot = (i - 1) * dims + (k - 1);
    const earlier = columnOfSlot[slot] ?? -1;
    if (earlier >= 0) {
      shape.add({ line: headerLine, column: header[column], message: `the same index as column ${quoteCell(header[earlier] ?? '')}` });
      continue;
    }
    columnOfSlot[slot] = column;
    slotOfColumn[column] = slot;
  }
  columnOfSlot.forEach((column, slot) => {
    if (column >= 0) return;
    if (!shape.wants) return shape.tally();
    shape.add({ line: headerLine, message: `no column for ${parameter}[${Math.floor(slot / dims) + 1},${(slot % dims) + 1}]` });
  });
  if (shape.any) throw shape.toError(`the columns of "${parameter}" do not form a full ${rows}×${dims} matrix (every ${parameter}[i,k] once, for i in 1..${rows} and k in 1..${dims})`);
  return { parameter, rows, dims, slotOfColumn, out: new GrowableFloat32(rows * dims * 16) };
}

/** CmdStan writes "#" comment lines (configuration, adaptation, timing) before and among the draws. */
const isComment = (cells: string[]): boolean => (cells[0] ?? '').startsWith('#');

/**
 * Draws-wide: a header, then one row per draw. Columns `name[i,k]` or `name.i.k` (1-based) hold
 * parameters; every other column (chain, iteration, lp__, sampler diagnostics, scalar or 1-index
 * parameters) is bookkeeping and ignored.
 */
export async function parseDrawsWide(file: UploadedFile, delimiter: Delimiter, options: ParseOptions, limits: ImportLimits): Promise<DrawsWideResult> {
  let parameters: string[] = [];
  let headerNames: readonly string[] = [];
  let headerLine = 0;
  let drawCount = 0;
  const ragged = new PlaceCollector('ragged_rows', file.name);
  const invalid = new PlaceCollector('invalid_value', file.name);

  const targets = await streamPlanned<Target[]>(
    file,
    delimiter,
    (sample) => {
      const first = sample[0];
      if (!first) throw emptyError(file.name, false);
      headerLine = first.line;
      const header = first.cells;
      headerNames = header;
      parameters = [...new Set(header.flatMap((name) => parseIndexedColumn(name)?.parameter ?? []))];
      const listed = parameters.map((name) => JSON.stringify(name)).join(', ');
      if (parameters.length === 0) {
        throw singleError('no_numeric_columns', file.name, 'no column is named like a matrix parameter, name[i,k] or name.i.k, so there is no factor matrix in these draws', {
          line: first.line,
          message: 'header without name[i,k] columns',
        });
      }
      const choose = (name: string, what: string): string => {
        if (parameters.includes(name)) return name;
        throw singleError('unknown_parameter', file.name, `the ${what} "${name}" is not in the file; its matrix parameters are ${listed}`);
      };
      let parameter: string;
      if (options.parameter !== undefined) parameter = choose(options.parameter, 'parameter');
      else if (parameters.length === 1) parameter = parameters[0] ?? '';
      else throw singleError('parameter_required', file.name, `the file holds several matrix parameters (${listed}); choose which one is the factor matrix`);
      const main = planTarget(file.name, header, first.line, parameter, limits);
      if (options.partnerParameter === undefined) return [main];
      const partner = planTarget(file.name, header, first.line, choose(options.partnerParameter, 'partner parameter'), limits);
      if (partner.dims !== main.dims) {
        throw singleError(
          'partner_dims_mismatch',
          file.name,
          `"${partner.parameter}" has ${partner.dims} dimensions but "${parameter}" has ${main.dims}; a jointly aligned pair needs the same number of latent dimensions`,
        );
      }
      return [main, partner];
    },
    (plan, { cells, line }) => {
      if (line === headerLine) return;
      const header = plan[0]?.slotOfColumn.length ?? 0;
      if (cells.length !== header) {
        ragged.add({ line, message: `expected ${header} fields, found ${cells.length}` });
        return;
      }
      if (drawCount >= limits.maxDraws) {
        throw singleError('too_many_draws', file.name, `the file has more than ${limits.maxDraws} draws, the limit`, { line, message: 'first draw beyond the limit' });
      }
      drawCount += 1;
      for (const target of plan) {
        const size = target.rows * target.dims;
        const out = target.out.reserve(size);
        const base = target.out.length;
        const slots = target.slotOfColumn;
        for (let column = 0; column < cells.length; column++) {
          const slot = slots[column] ?? -1;
          if (slot < 0) continue;
          const cell = cells[column] ?? '';
          const value = toFinite(cell);
          if (Number.isNaN(value)) {
            if (!invalid.wants) invalid.tally();
            else invalid.add({ line, column: headerNames[column] ?? column + 1, message: cell.trim() === '' ? 'the value is blank' : `${quoteCell(cell)} is not a finite number` });
          }
          out[base + slot] = value;
        }
        target.out.length = base + size;
      }
    },
    isComment,
  );
  throwFirst([
    [ragged, (n) => `${plural(n, 'draw row')} with the wrong number of fields`],
    [invalid, (n) => notFinite(n, 'draw value')],
  ]);
  if (drawCount === 0) throw emptyError(file.name, true);
  const [main, partner] = targets.map((target) => ({ parameter: target.parameter, rows: target.rows, dims: target.dims, draws: target.out.toArray() }));
  if (!main) throw emptyError(file.name, true);
  return partner ? { parameters, drawCount, main, partner } : { parameters, drawCount, main };
}
