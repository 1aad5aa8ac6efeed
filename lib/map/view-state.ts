/**
 * The state a view holds — projection, camera, colouring, sizing, filters, selection, neighbours —
 * as one zod schema shared by saved views (stored as JSON in `views.state`) and the map's URL, and
 * the URL encoding itself. Browser-safe: zod and the standard library only.
 *
 * URL form: `v1.` followed by base64url (RFC 4648 §5, no padding) of UTF-8 JSON in a compact shape
 * (short keys, defaults left out). Opaque but short, safe in a query string without escaping, and
 * versioned so a later encoding can still read old links. The camera is rounded to 6 significant
 * digits, which is far below a pixel at any zoom a person uses and keeps links short; everything else
 * round-trips exactly.
 *
 * Limits: a saved view may hold 10,000 selected entity ids, a URL only URL_SELECTION_LIMIT (200),
 * and an encoded parameter at most URL_PARAM_MAX_LENGTH characters — servers commonly refuse request
 * heads beyond 8–16 KiB (Node's default limit is 16 KiB; from memory), so a bigger selection belongs
 * in a saved view, linked by its id.
 */
import { z } from 'zod';

/** The most selected entity ids a saved view keeps. */
export const VIEW_SELECTION_LIMIT = 10_000;
/** The most selected entity ids the URL carries; more belongs in a saved view. */
export const URL_SELECTION_LIMIT = 200;
/** The longest view parameter encodeViewParam writes and decodeViewParam reads. */
export const URL_PARAM_MAX_LENGTH = 12_000;
/** The most filters a view holds. */
export const VIEW_FILTER_LIMIT = 50;

const PREFIX = 'v1.';

const columnName = z
  .string({ error: 'A column name must be text' })
  .min(1, 'A column name cannot be empty')
  .max(200, 'A column name has at most 200 characters');

const finiteCoordinate = z
  .number({ error: 'A camera coordinate must be a number' })
  .min(-1e12, 'A camera coordinate lies within ±10¹²')
  .max(1e12, 'A camera coordinate lies within ±10¹²');

export const COLOR_BY_KINDS = ['none', 'metadata', 'cluster', 'annotation', 'fidelity', 'spread'] as const;
export const SIZE_BY_KINDS = ['fixed', 'spread', 'metadata'] as const;
export const NEIGHBOR_METRICS = ['euclidean', 'cosine'] as const;

const colorBySchema = z
  .strictObject({
    kind: z.enum(COLOR_BY_KINDS, { error: `Colour by must be one of: ${COLOR_BY_KINDS.join(', ')}` }),
    column: columnName.optional(),
    clusteringId: z.uuid({ error: 'clusteringId must be a UUID' }).optional(),
  })
  .superRefine((value, context) => {
    if (value.kind === 'metadata' && value.column === undefined)
      context.addIssue({ code: 'custom', path: ['column'], message: 'Colouring by metadata needs a column' });
    if (value.kind !== 'metadata' && value.column !== undefined)
      context.addIssue({ code: 'custom', path: ['column'], message: `Colouring by ${value.kind} takes no column` });
    if (value.kind === 'cluster' && value.clusteringId === undefined)
      context.addIssue({ code: 'custom', path: ['clusteringId'], message: 'Colouring by cluster proposal needs a clusteringId' });
    if (value.kind !== 'cluster' && value.clusteringId !== undefined)
      context.addIssue({ code: 'custom', path: ['clusteringId'], message: `Colouring by ${value.kind} takes no clusteringId` });
  });

const sizeBySchema = z
  .strictObject({
    kind: z.enum(SIZE_BY_KINDS, { error: `Size by must be one of: ${SIZE_BY_KINDS.join(', ')}` }),
    column: columnName.optional(),
  })
  .superRefine((value, context) => {
    if (value.kind === 'metadata' && value.column === undefined)
      context.addIssue({ code: 'custom', path: ['column'], message: 'Sizing by metadata needs a column' });
    if (value.kind !== 'metadata' && value.column !== undefined)
      context.addIssue({ code: 'custom', path: ['column'], message: `Sizing by ${value.kind} takes no column` });
  });

const valuesFilterSchema = z.strictObject({
  column: columnName,
  values: z
    .array(z.string({ error: 'A filter value must be text' }).max(500, 'A filter value has at most 500 characters'))
    .max(1000, 'A filter keeps at most 1,000 values'),
});

const rangeFilterSchema = z
  .strictObject({
    column: columnName,
    min: z.number({ error: 'A filter minimum must be a finite number' }),
    max: z.number({ error: 'A filter maximum must be a finite number' }),
  })
  .refine((value) => value.min <= value.max, { message: 'A range filter needs min ≤ max', path: ['max'] });

const entityId = z
  .string({ error: 'A selected entity id must be text' })
  .min(1, 'A selected entity id cannot be empty')
  .max(500, 'An entity id has at most 500 characters');

export const mapViewSchema = z.strictObject({
  projectionId: z.uuid({ error: 'projectionId must be a UUID' }),
  compareProjectionId: z.uuid({ error: 'compareProjectionId must be a UUID' }).optional(),
  camera: z.strictObject({
    target: z.tuple([finiteCoordinate, finiteCoordinate], { error: 'The camera target is [x, y]' }),
    zoom: z
      .number({ error: 'The zoom must be a number' })
      .min(-20, 'The zoom lies between −20 and 30')
      .max(30, 'The zoom lies between −20 and 30'),
  }),
  colorBy: colorBySchema,
  sizeBy: sizeBySchema,
  filters: z
    .array(z.union([valuesFilterSchema, rangeFilterSchema], { error: 'A filter is {column, values} or {column, min, max}' }))
    .max(VIEW_FILTER_LIMIT, `A view holds at most ${VIEW_FILTER_LIMIT} filters`),
  selection: z.array(entityId).max(VIEW_SELECTION_LIMIT, `A saved view keeps at most ${VIEW_SELECTION_LIMIT.toLocaleString('en')} selected entities`),
  neighbors: z
    .strictObject({
      k: z
        .number({ error: 'k must be a whole number from 1 to 100' })
        .int('k must be a whole number from 1 to 100')
        .min(1, 'k must be a whole number from 1 to 100')
        .max(100, 'k must be a whole number from 1 to 100'),
      metric: z.enum(NEIGHBOR_METRICS, { error: `The neighbour metric is ${NEIGHBOR_METRICS.join(' or ')}` }),
    })
    .optional(),
});

export type MapView = z.infer<typeof mapViewSchema>;
export type MapFilter = MapView['filters'][number];

/** A fresh view of a projection: whole map at zoom 0, no colouring, fixed size, nothing filtered or selected. */
export function defaultView(projectionId: string): MapView {
  const parsed = mapViewSchema.safeParse({
    projectionId,
    camera: { target: [0, 0], zoom: 0 },
    colorBy: { kind: 'none' },
    sizeBy: { kind: 'fixed' },
    filters: [],
    selection: [],
  });
  if (!parsed.success) throw new RangeError(`defaultView: projectionId must be a UUID, got ${JSON.stringify(projectionId)}`);
  return parsed.data;
}

/** x rounded to 6 significant digits, as the URL keeps camera numbers (−0 becomes 0). */
export function roundCameraNumber(x: number): number {
  const rounded = Number(x.toPrecision(6));
  return rounded === 0 ? 0 : rounded;
}

/** The view as the URL keeps it: the camera rounded to 6 significant digits, the rest unchanged. */
export function urlRoundedView(view: MapView): MapView {
  return {
    ...view,
    camera: {
      target: [roundCameraNumber(view.camera.target[0]), roundCameraNumber(view.camera.target[1])],
      zoom: roundCameraNumber(view.camera.zoom),
    },
  };
}

/** Whether encodeViewParam accepts this view (the selection and the encoded length fit a URL). */
export function fitsInUrl(view: MapView): boolean {
  return view.selection.length <= URL_SELECTION_LIMIT && encodeUnchecked(view).length <= URL_PARAM_MAX_LENGTH;
}

// ---- compact JSON shape ----------------------------------------------------------------------
// { p: projectionId, q?: compareProjectionId, c: [x, y, zoom], k?: [kind, column|clusteringId?],
//   s?: [kind, column?], f?: [[column, [values…]] | [column, min, max]], e?: [ids…], n?: [k, metric] }
// Defaults (colour none, size fixed, no filters, no selection) are left out.

type CompactFilter = [string, string[]] | [string, number, number];
interface CompactView {
  p: string;
  q?: string;
  c: [number, number, number];
  k?: [string] | [string, string];
  s?: [string] | [string, string];
  f?: CompactFilter[];
  e?: string[];
  n?: [number, string];
}

function toCompact(view: MapView): CompactView {
  const rounded = urlRoundedView(view);
  const compact: CompactView = {
    p: view.projectionId,
    c: [rounded.camera.target[0], rounded.camera.target[1], rounded.camera.zoom],
  };
  if (view.compareProjectionId !== undefined) compact.q = view.compareProjectionId;
  const colorDetail = view.colorBy.column ?? view.colorBy.clusteringId;
  if (view.colorBy.kind !== 'none' || colorDetail !== undefined)
    compact.k = colorDetail === undefined ? [view.colorBy.kind] : [view.colorBy.kind, colorDetail];
  if (view.sizeBy.kind !== 'fixed' || view.sizeBy.column !== undefined)
    compact.s = view.sizeBy.column === undefined ? [view.sizeBy.kind] : [view.sizeBy.kind, view.sizeBy.column];
  if (view.filters.length > 0)
    compact.f = view.filters.map((filter): CompactFilter => ('values' in filter ? [filter.column, filter.values] : [filter.column, filter.min, filter.max]));
  if (view.selection.length > 0) compact.e = view.selection;
  if (view.neighbors !== undefined) compact.n = [view.neighbors.k, view.neighbors.metric];
  return compact;
}

const isRecord = (value: unknown): value is Record<string, unknown> => typeof value === 'object' && value !== null && !Array.isArray(value);
/** The value as a list of unknowns (Array.isArray alone would type its items as any), or null. */
const asList = (value: unknown): readonly unknown[] | null => (Array.isArray(value) ? (value as unknown[]) : null);

/**
 * The compact shape back into a candidate MapView for the schema to judge. Anything of the wrong
 * shape is passed through as it is, so the schema's message names the field at fault; unknown keys
 * are refused here, since the compact object has no schema of its own.
 */
function fromCompact(raw: unknown): { ok: true; candidate: unknown } | { ok: false; error: string } {
  if (!isRecord(raw)) return { ok: false, error: 'the view is not a JSON object' };
  const known = new Set(['p', 'q', 'c', 'k', 's', 'f', 'e', 'n']);
  const unknownKey = Object.keys(raw).find((key) => !known.has(key));
  if (unknownKey !== undefined) return { ok: false, error: `unknown field ${JSON.stringify(unknownKey.slice(0, 40))}` };

  const candidate: Record<string, unknown> = { projectionId: raw.p };
  if (raw.q !== undefined) candidate.compareProjectionId = raw.q;

  const camera = asList(raw.c);
  if (!camera || camera.length !== 3) return { ok: false, error: 'camera: expected [x, y, zoom]' };
  candidate.camera = { target: [camera[0], camera[1]], zoom: camera[2] };

  const colorBy = asList(raw.k);
  if (raw.k === undefined) candidate.colorBy = { kind: 'none' };
  else if (!colorBy || colorBy.length < 1 || colorBy.length > 2) return { ok: false, error: 'colorBy: expected [kind] or [kind, detail]' };
  else {
    const [kind, detail] = colorBy;
    const expanded: Record<string, unknown> = { kind };
    if (detail !== undefined) expanded[kind === 'cluster' ? 'clusteringId' : 'column'] = detail;
    candidate.colorBy = expanded;
  }

  const sizeBy = asList(raw.s);
  if (raw.s === undefined) candidate.sizeBy = { kind: 'fixed' };
  else if (!sizeBy || sizeBy.length < 1 || sizeBy.length > 2) return { ok: false, error: 'sizeBy: expected [kind] or [kind, column]' };
  else {
    const [kind, column] = sizeBy;
    candidate.sizeBy = column === undefined ? { kind } : { kind, column };
  }

  const filterList = asList(raw.f);
  if (raw.f === undefined) candidate.filters = [];
  else if (!filterList) return { ok: false, error: 'filters: expected a list' };
  else if (filterList.length > VIEW_FILTER_LIMIT) return { ok: false, error: `filters: a view holds at most ${VIEW_FILTER_LIMIT} filters` };
  else {
    const filters: unknown[] = [];
    for (const [index, item] of filterList.entries()) {
      const entry = asList(item);
      if (entry && entry.length === 2) filters.push({ column: entry[0], values: entry[1] });
      else if (entry && entry.length === 3) filters.push({ column: entry[0], min: entry[1], max: entry[2] });
      else return { ok: false, error: `filters.${index}: expected [column, values] or [column, min, max]` };
    }
    candidate.filters = filters;
  }

  const selection = asList(raw.e);
  if (raw.e === undefined) candidate.selection = [];
  else if (!selection) return { ok: false, error: 'selection: expected a list of entity ids' };
  else if (selection.length > URL_SELECTION_LIMIT)
    return { ok: false, error: `selection: a link carries at most ${URL_SELECTION_LIMIT} selected entities (save a view for more)` };
  else candidate.selection = selection;

  if (raw.n !== undefined) {
    const neighbors = asList(raw.n);
    if (!neighbors || neighbors.length !== 2) return { ok: false, error: 'neighbors: expected [k, metric]' };
    candidate.neighbors = { k: neighbors[0], metric: neighbors[1] };
  }
  return { ok: true, candidate };
}

// ---- base64url over UTF-8 (our own, so decoding never throws and rejects stray characters) ------

const ALPHABET = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_';
const DECODE = new Int16Array(128).fill(-1);
for (let i = 0; i < ALPHABET.length; i++) DECODE[ALPHABET.charCodeAt(i)] = i;

function base64urlEncode(bytes: Uint8Array): string {
  let out = '';
  for (let i = 0; i < bytes.length; i += 3) {
    const b0 = bytes[i] ?? 0;
    const b1 = bytes[i + 1] ?? 0;
    const b2 = bytes[i + 2] ?? 0;
    const triple = (b0 << 16) | (b1 << 8) | b2;
    const remaining = bytes.length - i;
    out += ALPHABET[(triple >> 18) & 63];
    out += ALPHABET[(triple >> 12) & 63];
    if (remaining > 1) out += ALPHABET[(triple >> 6) & 63];
    if (remaining > 2) out += ALPHABET[triple & 63];
  }
  return out;
}

/** Bytes of unpadded base64url text, or null when a character is foreign or the length impossible. */
function base64urlDecode(text: string): Uint8Array | null {
  if (text.length % 4 === 1) return null;
  const out = new Uint8Array(Math.floor((text.length * 3) / 4));
  let written = 0;
  for (let i = 0; i < text.length; i += 4) {
    let triple = 0;
    const chunk = Math.min(4, text.length - i);
    for (let k = 0; k < 4; k++) {
      let sextet = 0;
      if (k < chunk) {
        const code = text.charCodeAt(i + k);
        sextet = code < 128 ? (DECODE[code] ?? -1) : -1;
        if (sextet < 0) return null;
      }
      triple = (triple << 6) | sextet;
    }
    out[written++] = (triple >> 16) & 255;
    if (chunk > 2) out[written++] = (triple >> 8) & 255;
    if (chunk > 3) out[written++] = triple & 255;
  }
  return out.subarray(0, written);
}

function encodeUnchecked(view: MapView): string {
  return PREFIX + base64urlEncode(new TextEncoder().encode(JSON.stringify(toCompact(view))));
}

/**
 * The view as a URL-safe parameter (`v1.` + base64url of compact JSON), camera rounded to 6
 * significant digits. Throws a RangeError when the view cannot travel in a URL — more than
 * URL_SELECTION_LIMIT selected ids or a parameter over URL_PARAM_MAX_LENGTH characters (check with
 * fitsInUrl first; save such a view instead) — and a TypeError when the view fails the schema.
 */
export function encodeViewParam(view: MapView): string {
  const parsed = mapViewSchema.safeParse(view);
  if (!parsed.success) throw new TypeError(`encodeViewParam: not a valid view (${describeIssue(parsed.error)})`);
  if (view.selection.length > URL_SELECTION_LIMIT)
    throw new RangeError(`encodeViewParam: a link carries at most ${URL_SELECTION_LIMIT} selected entities, this view has ${view.selection.length}; save it as a view instead`);
  const param = encodeUnchecked(parsed.data);
  if (param.length > URL_PARAM_MAX_LENGTH)
    throw new RangeError(`encodeViewParam: the view encodes to ${param.length} characters, more than ${URL_PARAM_MAX_LENGTH}; save it as a view instead`);
  return param;
}

function describeIssue(error: z.ZodError): string {
  const issue = error.issues[0];
  if (!issue) return 'invalid view';
  const path = issue.path.map(String).join('.');
  return path ? `${path}: ${issue.message}` : issue.message;
}

/**
 * Reads a view parameter back. Never throws: anything that is not a parameter encodeViewParam could
 * have written — wrong prefix, foreign characters, broken UTF-8 or JSON, a field out of bounds —
 * gives { ok: false, error } with a sentence saying what was wrong.
 */
export function decodeViewParam(param: string): { ok: true; view: MapView } | { ok: false; error: string } {
  try {
    if (typeof param !== 'string') return { ok: false, error: 'The view link is not text' };
    if (param.length > URL_PARAM_MAX_LENGTH) return { ok: false, error: `The view link is too long (${param.length} characters, at most ${URL_PARAM_MAX_LENGTH})` };
    if (!param.startsWith(PREFIX)) return { ok: false, error: 'The view link is not one this version of Asterism wrote (it should start with "v1.")' };
    const bytes = base64urlDecode(param.slice(PREFIX.length));
    if (!bytes || bytes.length === 0) return { ok: false, error: 'The view link is damaged (not base64url text)' };
    let text: string;
    try {
      text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
    } catch {
      return { ok: false, error: 'The view link is damaged (not UTF-8 text)' };
    }
    let raw: unknown;
    try {
      raw = JSON.parse(text);
    } catch {
      return { ok: false, error: 'The view link is damaged (not JSON)' };
    }
    const expanded = fromCompact(raw);
    if (!expanded.ok) return { ok: false, error: `The view link is not a valid view: ${expanded.error}` };
    const parsed = mapViewSchema.safeParse(expanded.candidate);
    if (!parsed.success) return { ok: false, error: `The view link is not a valid view: ${describeIssue(parsed.error)}` };
    return { ok: true, view: parsed.data };
  } catch {
    // Defensive: nothing above should throw, but a link must never break the page.
    return { ok: false, error: 'The view link could not be read' };
  }
}

/**
 * encodeViewParam without the throw, for code that runs where an exception would break the page (a
 * render, a timer): { ok: false, error } when the view cannot travel in a URL, so the caller can
 * fall back to linking the saved view by its id.
 */
export function tryEncodeViewParam(view: MapView): { ok: true; param: string } | { ok: false; error: string } {
  try {
    return { ok: true, param: encodeViewParam(view) };
  } catch (error) {
    return { ok: false, error: error instanceof Error ? error.message : String(error) };
  }
}
