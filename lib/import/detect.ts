import { normalizeName, sniffRows } from './text';
import type { ImportFormat } from './types';

/** `gamma[3,2]` (Stan, CmdStan, NumPyro summaries) and `gamma.3.2` (R's make.names of the same). */
const BRACKET_COLUMN = /^(.+)\[\s*(\d+)\s*,\s*(\d+)\s*\]$/;
const DOT_COLUMN = /^(.+)\.(\d+)\.(\d+)$/;

export interface IndexedColumn {
  parameter: string;
  /** 1-based, as written. */
  i: number;
  k: number;
}

/** Reads a draws-wide column name; anything that is not name[i,k] or name.i.k is bookkeeping. */
export function parseIndexedColumn(name: string): IndexedColumn | null {
  const trimmed = name.trim();
  const match = BRACKET_COLUMN.exec(trimmed) ?? DOT_COLUMN.exec(trimmed);
  if (!match) return null;
  const [, parameter = '', i = '', k = ''] = match;
  return { parameter, i: Number(i), k: Number(k) };
}

const ENTITY_NAMES = new Set(['entity', 'entityid', 'id', 'ids', 'item', 'itemid', 'name', 'row', 'rowid', 'i', 'unit', 'node', 'respondent', 'subject']);
const DIM_NAMES = new Set(['dim', 'dimension', 'k', 'factor', 'component', 'latent', 'axis', 'col', 'column', 'j']);
const VALUE_NAMES = new Set(['value', 'val', 'v', 'x', 'y', 'estimate', 'score', 'loading']);
const DRAW_NAMES = new Set(['draw', 'draws', 'drawid', 'sample', 'iteration', 'iter', 's']);

export interface LongColumns {
  draw?: number;
  entity: number;
  dimension: number;
  value: number;
}

/** Finds the roles of a long-format header by name; null when the names do not say. */
export function classifyLongHeader(header: readonly string[], withDraw: boolean): LongColumns | null {
  const find = (names: Set<string>, taken: number[]): number => header.findIndex((name, index) => !taken.includes(index) && names.has(normalizeName(name)));
  const taken: number[] = [];
  let draw: number | undefined;
  if (withDraw) {
    draw = find(DRAW_NAMES, taken);
    if (draw < 0) return null;
    taken.push(draw);
  }
  const entity = find(ENTITY_NAMES, taken);
  if (entity < 0) return null;
  taken.push(entity);
  const dimension = find(DIM_NAMES, taken);
  if (dimension < 0) return null;
  taken.push(dimension);
  const value = find(VALUE_NAMES, taken);
  if (value < 0) return null;
  return draw === undefined ? { entity, dimension, value } : { draw, entity, dimension, value };
}

/** Header names that mark the id column of a wide file. "" is the unnamed row-name column R and pandas write. */
const ID_NAMES = new Set(['', 'id', 'ids', 'entity', 'entityid', 'name', 'key', 'rowname', 'rownames', 'unnamed0', 'index', 'item', 'itemid']);
export function isIdName(name: string): boolean {
  const normalized = normalizeName(name);
  // "label" names the label column, never the id
  return normalized !== 'label' && (ID_NAMES.has(normalized) || /(^|[^a-z])id$/i.test(name.trim()));
}

/**
 * Detection, in this order: the .npy magic or a .npy name; JSON by a first character `{` or `[` or
 * a .json name; otherwise delimited text, told apart by its header: any `name[i,k]` / `name.i.k`
 * column makes draws-wide; four columns named like draw, entity, dimension, value make draws-long;
 * three named like entity, dimension, value make delimited-long; anything else is delimited-wide.
 */
export function detectFormat(name: string, head: Buffer): ImportFormat {
  const lower = name.toLowerCase();
  if (head.subarray(0, 6).equals(Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59])) || lower.endsWith('.npy')) return 'npy';
  let start = head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf ? 3 : 0;
  while (start < head.length && [0x20, 0x09, 0x0a, 0x0d].includes(head[start] ?? 0)) start += 1;
  const first = head[start];
  if (first === 0x7b || first === 0x5b || lower.endsWith('.json')) return 'json';

  // CmdStan writes "#" comment lines before and among the draws
  const rows = sniffRows(head).rows.filter((row) => !(row[0] ?? '').startsWith('#'));
  const header = rows[0] ?? [];
  if (header.some((cell) => parseIndexedColumn(cell) !== null)) return 'draws-wide';
  if (header.length === 4 && classifyLongHeader(header, true)) return 'draws-long';
  if (header.length === 3 && classifyLongHeader(header, false)) return 'delimited-long';
  return 'delimited-wide';
}
