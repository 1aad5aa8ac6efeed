import { isIdName } from './detect';
import { PlaceCollector, plural, quoteCell, singleError } from './places';
import { resolveColumn } from './rows';
import { checkSize, checkTextHead, normalizeName, readHead, sniffRows, streamRows, toFinite, type Delimiter } from './text';
import type { ImportLimits, MetadataColumn, MetadataType, MetadataValue, ParseOptions, UploadedFile } from './types';

/** A metadata column as read: one raw cell per entity, in entity order. */
export interface RawColumn {
  name: string;
  cells: string[];
}

export interface Metadata {
  metadataColumns: MetadataColumn[];
  metadata: MetadataValue[][];
}

const ISO_DATE = /^(\d{4})-(\d{2})-(\d{2})$/;
const ISO_TIMESTAMP = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2})(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}(:?\d{2})?)?$/;

/** A real calendar date: Date.parse alone accepts 2023-02-30 and rolls it over to March. */
function isCalendarDate(year: string, month: string, day: string): boolean {
  const y = Number(year);
  const m = Number(month);
  const d = Number(day);
  if (m < 1 || m > 12 || d < 1) return false;
  return d <= new Date(Date.UTC(y, m, 0)).getUTCDate();
}

export function isIsoDate(cell: string): boolean {
  const date = ISO_DATE.exec(cell);
  if (date) return isCalendarDate(date[1] ?? '', date[2] ?? '', date[3] ?? '');
  const stamp = ISO_TIMESTAMP.exec(cell);
  if (!stamp) return false;
  return isCalendarDate(stamp[1] ?? '', stamp[2] ?? '', stamp[3] ?? '') && Number(stamp[4]) < 24 && Number(stamp[5]) < 60 && Number.isFinite(Date.parse(cell.replace(' ', 'T')));
}

/**
 * Type of a column: number when every non-empty cell is a finite number, date when every one is an
 * ISO-8601 date or timestamp, else category. A column with no values at all is a category.
 */
export function inferType(cells: readonly string[]): MetadataType {
  let filled = 0;
  let numbers = 0;
  let dates = 0;
  for (const raw of cells) {
    const cell = raw.trim();
    if (cell === '') continue;
    filled += 1;
    if (!Number.isNaN(toFinite(cell))) numbers += 1;
    else if (isIsoDate(cell)) dates += 1;
  }
  if (filled === 0) return 'category';
  if (numbers === filled) return 'number';
  if (dates === filled) return 'date';
  return 'category';
}

export function inferMetadata(columns: readonly RawColumn[], entities: number): Metadata {
  const metadataColumns = columns.map((column) => ({ name: column.name, type: inferType(column.cells) }));
  const metadata: MetadataValue[][] = Array.from({ length: entities }, () => new Array<MetadataValue>(columns.length).fill(null));
  columns.forEach((column, c) => {
    const type = metadataColumns[c]?.type ?? 'category';
    for (let row = 0; row < entities; row++) {
      const cell = (column.cells[row] ?? '').trim();
      if (cell === '') continue;
      const values = metadata[row];
      if (values) values[c] = type === 'number' ? toFinite(cell) : type === 'date' ? cell.replace(' ', 'T') : (column.cells[row] ?? '');
    }
  });
  return { metadataColumns, metadata };
}

export interface LabelsTable {
  ids: string[];
  labels: (string | null)[] | null;
  columns: RawColumn[];
}

/**
 * A labels file is delimited text with a header: the id column (`idColumn`, else the first column
 * named like an id, else the first column), then the label column (`labelColumn`, else one named
 * "label", else the column after the id) and metadata columns.
 */
export async function readLabelsFile(file: UploadedFile, options: ParseOptions, limits: ImportLimits): Promise<LabelsTable> {
  await checkSize(file, limits);
  const head = await readHead(file.path);
  checkTextHead(head, file.name);
  const delimiter: Delimiter = options.delimiter ?? sniffRows(head).delimiter;
  let header: string[] | null = null;
  let idColumn = 0;
  let labelColumn = -1;
  const ids: string[] = [];
  const labels: (string | null)[] = [];
  let metaIndexes: number[] = [];
  let columns: RawColumn[] = [];
  const seen = new Map<string, number>();
  const ragged = new PlaceCollector('ragged_rows', file.name);
  const missing = new PlaceCollector('missing_ids', file.name);
  const duplicate = new PlaceCollector('duplicate_ids', file.name);

  await streamRows(file, delimiter, (cells, line) => {
    if (!header) {
      header = cells;
      const width = cells.length;
      idColumn = options.idColumn && cells.includes(options.idColumn) ? resolveColumn(file.name, options.idColumn, cells, width, 'id column') : Math.max(0, cells.findIndex(isIdName));
      const named = cells.findIndex((name, index) => index !== idColumn && normalizeName(name) === 'label');
      labelColumn = options.labelColumn ? resolveColumn(file.name, options.labelColumn, cells, width, 'label column') : named >= 0 ? named : idColumn + 1 < width ? idColumn + 1 : -1;
      metaIndexes = cells.map((_, index) => index).filter((index) => index !== idColumn && index !== labelColumn);
      columns = metaIndexes.map((index) => ({ name: cells[index] ?? String(index + 1), cells: [] }));
      return;
    }
    const names: string[] = header;
    if (cells.length !== names.length) {
      ragged.add({ line, message: `expected ${names.length} fields, found ${cells.length}` });
      return;
    }
    const id = cells[idColumn] ?? '';
    if (id.trim() === '') missing.add({ line, column: names[idColumn], message: 'the id is blank' });
    const earlier = seen.get(id);
    if (earlier !== undefined) duplicate.add({ line, column: names[idColumn], message: `id ${quoteCell(id)} is already on line ${earlier}` });
    else seen.set(id, line);
    if (ids.length >= limits.maxRows) throw singleError('too_many_rows', file.name, `the labels file has more than ${limits.maxRows} rows, the limit`, { line, message: 'row beyond the limit' });
    ids.push(id);
    if (labelColumn >= 0) {
      const label = cells[labelColumn] ?? '';
      labels.push(label.trim() === '' ? null : label);
    }
    metaIndexes.forEach((index, c) => columns[c]?.cells.push(cells[index] ?? ''));
  });
  if (!header) throw singleError('empty_file', file.name, 'the labels file is empty');
  if (ids.length === 0) throw singleError('empty_file', file.name, 'the labels file has a header but no rows');
  for (const [collector, summary] of [
    [ragged, (n: number) => `${plural(n, 'row')} with the wrong number of fields`],
    [missing, (n: number) => `${plural(n, 'row')} without an id`],
    [duplicate, (n: number) => `${n === 1 ? '1 id appears' : `${n} ids appear`} more than once`],
  ] as const) {
    if (collector.any) throw collector.toError(summary(collector.count));
  }
  return { ids, labels: labelColumn >= 0 ? labels : null, columns };
}

const LISTED_IDS = 20;

function mismatchWarning(ids: readonly string[], where: (one: boolean) => string): string {
  const shown = ids.slice(0, LISTED_IDS).map(quoteCell).join(', ');
  const more = ids.length > LISTED_IDS ? `, and ${ids.length - LISTED_IDS} more` : '';
  return `${plural(ids.length, 'id')} ${where(ids.length === 1)}: ${shown}${more}.`;
}

/**
 * Joins a labels file onto the factor ids. Labels from the labels file win over the factor file's;
 * its metadata columns come after the factor file's (a clashing name gets " (labels file)").
 */
export function joinLabels(
  factorFile: string,
  ids: readonly string[],
  labels: (string | null)[] | null,
  columns: RawColumn[],
  table: LabelsTable,
  labelsFile: string,
): { labels: (string | null)[] | null; columns: RawColumn[]; warnings: string[] } {
  const rowOf = new Map<string, number>();
  table.ids.forEach((id, row) => rowOf.set(id, row));
  const factorIds = new Set(ids);
  const unlabelled = ids.filter((id) => !rowOf.has(id));
  const unknown = table.ids.filter((id) => !factorIds.has(id));
  const warnings: string[] = [];
  if (unlabelled.length > 0) warnings.push(mismatchWarning(unlabelled, (one) => `in ${factorFile} ${one ? 'has' : 'have'} no row in ${labelsFile}`));
  if (unknown.length > 0) warnings.push(mismatchWarning(unknown, (one) => `in ${labelsFile} ${one ? 'is' : 'are'} not in ${factorFile} and ${one ? 'was' : 'were'} ignored`));

  const pick = <T>(source: readonly T[], missing: T): T[] =>
    ids.map((id) => {
      const row = rowOf.get(id);
      return row === undefined ? missing : (source[row] ?? missing);
    });
  const joinedLabels = table.labels ? pick(table.labels, null).map((label, row) => label ?? labels?.[row] ?? null) : labels;
  const names = new Set(columns.map((column) => column.name));
  const joinedColumns = [
    ...columns,
    ...table.columns.map((column) => ({ name: names.has(column.name) ? `${column.name} (labels file)` : column.name, cells: pick(column.cells, '') })),
  ];
  return { labels: joinedLabels, columns: joinedColumns, warnings };
}
