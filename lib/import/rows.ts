import { singleError } from './places';
import { isNumberLike, normalizeName, streamRows, type Delimiter } from './text';
import { ImportError, type UploadedFile } from './types';

export interface Row {
  cells: string[];
  /** 1-based, counting the header line. */
  line: number;
}

/** How many leading rows decide the layout (header, column roles) before the rest streams past. */
export const SAMPLE_ROWS = 500;

/**
 * Streams a delimited file, holding the first SAMPLE_ROWS rows back until `plan` has decided the
 * layout from them, then feeding every row (those and the rest) to `each`. `plan` also runs for a
 * file shorter than the sample, and with no rows at all, so it is where an empty file is refused.
 */
export async function streamPlanned<P>(
  file: UploadedFile,
  delimiter: Delimiter,
  plan: (sample: Row[]) => P,
  each: (layout: P, row: Row) => void,
  skipRow: (cells: string[]) => boolean = () => false,
): Promise<P> {
  const sample: Row[] = [];
  // boxed, so that a P which may itself be undefined is still told apart from "not planned yet"
  const state: { planned: { layout: P } | null } = { planned: null };
  await streamRows(file, delimiter, (cells, line) => {
    if (skipRow(cells)) return;
    const planned = state.planned;
    if (planned) {
      each(planned.layout, { cells, line });
      return;
    }
    sample.push({ cells, line });
    if (sample.length >= SAMPLE_ROWS) {
      const layout = plan(sample);
      state.planned = { layout };
      for (const row of sample) each(layout, row);
      sample.length = 0;
    }
  });
  if (state.planned) return state.planned.layout;
  const layout = plan(sample);
  for (const row of sample) each(layout, row);
  return layout;
}

/**
 * Header detection: the first row is a header when some column is not a number there but is one in
 * most later rows. With a single row, it is a header only when nothing in it is a number.
 */
export function detectHeader(sample: readonly Row[]): boolean {
  const first = sample[0];
  if (!first) return false;
  const rest = sample.slice(1);
  if (rest.length === 0) return first.cells.every((cell) => !isNumberLike(cell));
  return first.cells.some((cell, column) => {
    if (isNumberLike(cell)) return false;
    const numeric = rest.filter((row) => isNumberLike(row.cells[column] ?? '')).length;
    return numeric * 2 > rest.length;
  });
}

/** Column names for messages: the header's names, or 1-based numbers without a header. */
export function columnNames(width: number, header: readonly string[] | null): (string | number)[] {
  return Array.from({ length: width }, (_, index) => (header ? (header[index] ?? String(index + 1)) : index + 1));
}

/** Finds a column the analyst named: exact header name, then loosely, then a 1-based number. */
export function resolveColumn(file: string, spec: string, header: readonly string[] | null, width: number, what: string): number {
  if (header) {
    const exact = header.indexOf(spec);
    if (exact >= 0) return exact;
    const loose = header.findIndex((name) => normalizeName(name) === normalizeName(spec) && normalizeName(spec) !== '');
    if (loose >= 0) return loose;
  }
  if (/^\d+$/.test(spec.trim())) {
    const index = Number(spec.trim()) - 1;
    if (index >= 0 && index < width) return index;
  }
  const known = header ? header.map((name) => JSON.stringify(name)).join(', ') : `1 to ${width}`;
  throw singleError('unknown_column', file, `the ${what} "${spec}" is not a column of the file (columns: ${known})`);
}

export function emptyError(file: string, hadHeader: boolean): ImportError {
  return singleError('empty_file', file, hadHeader ? 'the file has a header but no data rows' : 'the file holds no rows');
}
