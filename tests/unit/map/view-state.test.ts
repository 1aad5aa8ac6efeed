import { describe, expect, it } from 'vitest';
import { mulberry32 } from '@/lib/align/random';
import {
  decodeViewParam,
  defaultView,
  encodeViewParam,
  fitsInUrl,
  type MapView,
  mapViewSchema,
  roundCameraNumber,
  URL_PARAM_MAX_LENGTH,
  tryEncodeViewParam,
  URL_SELECTION_LIMIT,
  urlRoundedView,
  VIEW_SELECTION_LIMIT,
} from '@/lib/map/view-state';

const PROJECTION = '3f2b8c1e-5d4a-4b7e-9c2d-1a0f6e8b7c55';
const OTHER_PROJECTION = 'a1c9e4f2-7b3d-4e8a-b5f6-2d9c0e1f3a47';
const CLUSTERING = '0b7e2d4c-9a1f-4c3e-8d5b-6f2a1e0c9b38';

const FULL: MapView = {
  projectionId: PROJECTION,
  compareProjectionId: OTHER_PROJECTION,
  camera: { target: [12.3456789, -0.000123456789], zoom: 3.14159265 },
  colorBy: { kind: 'metadata', column: 'region' },
  sizeBy: { kind: 'metadata', column: 'footfall' },
  filters: [
    { column: 'region', values: ['north', 'coast', 'ünïcödé ✓', ''] },
    { column: 'footfall', min: -1.5e-7, max: 123456.789012345 },
  ],
  selection: ['shop-001', 'shop-042', 'Café "Larkspur" #7'],
  neighbors: { k: 12, metric: 'cosine' },
};

function decoded(param: string): MapView {
  const result = decodeViewParam(param);
  if (!result.ok) throw new Error(`expected a view, got: ${result.error}`);
  return result.view;
}

describe('mapViewSchema', () => {
  it('accepts the default view and a full one', () => {
    expect(mapViewSchema.safeParse(defaultView(PROJECTION)).success).toBe(true);
    expect(mapViewSchema.safeParse(FULL).success).toBe(true);
  });

  it('keeps its bounds: zoom −20..30, k 1..100, at most 50 filters and 10,000 selected ids', () => {
    const base = defaultView(PROJECTION);
    const check = (patch: Partial<MapView>): boolean => mapViewSchema.safeParse({ ...base, ...patch }).success;
    expect(check({ camera: { target: [0, 0], zoom: 30 } })).toBe(true);
    expect(check({ camera: { target: [0, 0], zoom: 30.5 } })).toBe(false);
    expect(check({ camera: { target: [0, 0], zoom: -21 } })).toBe(false);
    expect(check({ camera: { target: [Number.NaN, 0], zoom: 0 } })).toBe(false);
    expect(check({ camera: { target: [Infinity, 0], zoom: 0 } })).toBe(false);
    expect(check({ neighbors: { k: 100, metric: 'euclidean' } })).toBe(true);
    expect(check({ neighbors: { k: 101, metric: 'euclidean' } })).toBe(false);
    expect(check({ neighbors: { k: 2.5, metric: 'euclidean' } })).toBe(false);
    const filter = { column: 'c', values: ['a'] };
    expect(check({ filters: Array.from({ length: 50 }, () => filter) })).toBe(true);
    expect(check({ filters: Array.from({ length: 51 }, () => filter) })).toBe(false);
    expect(check({ selection: Array.from({ length: VIEW_SELECTION_LIMIT }, (_, i) => `e${i}`) })).toBe(true);
    expect(check({ selection: Array.from({ length: VIEW_SELECTION_LIMIT + 1 }, (_, i) => `e${i}`) })).toBe(false);
  });

  it('asks for what a colouring needs and refuses what it does not take', () => {
    const base = defaultView(PROJECTION);
    const colorBy = (value: unknown): boolean => mapViewSchema.safeParse({ ...base, colorBy: value }).success;
    expect(colorBy({ kind: 'metadata' })).toBe(false);
    expect(colorBy({ kind: 'cluster' })).toBe(false);
    expect(colorBy({ kind: 'cluster', clusteringId: CLUSTERING })).toBe(true);
    expect(colorBy({ kind: 'cluster', clusteringId: 'not-a-uuid' })).toBe(false);
    expect(colorBy({ kind: 'fidelity', column: 'x' })).toBe(false);
    expect(colorBy({ kind: 'rainbow' })).toBe(false);
    expect(mapViewSchema.safeParse({ ...base, sizeBy: { kind: 'metadata' } }).success).toBe(false);
    expect(mapViewSchema.safeParse({ ...base, filters: [{ column: 'x', min: 2, max: 1 }] }).success).toBe(false);
    expect(mapViewSchema.safeParse({ ...base, extra: true }).success).toBe(false);
  });
});

describe('defaultView', () => {
  it('is the whole map, uncoloured, unfiltered, nothing selected', () => {
    expect(defaultView(PROJECTION)).toEqual({
      projectionId: PROJECTION,
      camera: { target: [0, 0], zoom: 0 },
      colorBy: { kind: 'none' },
      sizeBy: { kind: 'fixed' },
      filters: [],
      selection: [],
    });
  });

  it('refuses a projection id that is not a UUID', () => {
    expect(() => defaultView('projection-1')).toThrow(RangeError);
  });
});

describe('encodeViewParam / decodeViewParam', () => {
  it('round-trips a full view exactly, the camera rounded to 6 significant digits', () => {
    const param = encodeViewParam(FULL);
    expect(param).toMatch(/^v1\.[A-Za-z0-9_-]+$/);
    const view = decoded(param);
    expect(view).toEqual(urlRoundedView(FULL));
    expect(view.camera).toEqual({ target: [12.3457, -0.000123457], zoom: 3.14159 });
    // Filters and selection are not rounded.
    expect(view.filters).toEqual(FULL.filters);
    expect(view.selection).toEqual(FULL.selection);
  });

  it('is stable: encoding what it decoded gives the same parameter', () => {
    const once = encodeViewParam(FULL);
    expect(encodeViewParam(decoded(once))).toBe(once);
  });

  it('keeps the default view short', () => {
    const param = encodeViewParam(defaultView(PROJECTION));
    expect(decoded(param)).toEqual(defaultView(PROJECTION));
    expect(param.length).toBeLessThan(90);
  });

  it('round-trips random views (seeded), each stable after one pass', () => {
    const random = mulberry32(5);
    const pick = <T>(items: readonly T[]): T => items[Math.floor(random() * items.length)] as T;
    const wild = (): number => (random() - 0.5) * 10 ** Math.floor(random() * 12 - 6);
    for (let trial = 0; trial < 300; trial++) {
      const kind = pick(['none', 'metadata', 'cluster', 'annotation', 'fidelity', 'spread'] as const);
      const view: MapView = {
        projectionId: PROJECTION,
        camera: { target: [wild(), wild()], zoom: -20 + random() * 50 },
        colorBy: kind === 'metadata' ? { kind, column: `c${trial}` } : kind === 'cluster' ? { kind, clusteringId: CLUSTERING } : { kind },
        sizeBy: pick([{ kind: 'fixed' }, { kind: 'spread' }, { kind: 'metadata', column: 'size' }] as const),
        filters: Array.from({ length: Math.floor(random() * 4) }, (_, i) =>
          random() < 0.5 ? { column: `f${i}`, values: [String(random())] } : { column: `r${i}`, min: -random(), max: random() },
        ),
        selection: Array.from({ length: Math.floor(random() * 20) }, (_, i) => `id-${trial}-${i}`),
        ...(random() < 0.5 ? { neighbors: { k: 1 + Math.floor(random() * 100), metric: pick(['euclidean', 'cosine'] as const) } } : {}),
        ...(random() < 0.3 ? { compareProjectionId: OTHER_PROJECTION } : {}),
      };
      const param = encodeViewParam(view);
      const back = decoded(param);
      expect(back).toEqual(urlRoundedView(view));
      expect(encodeViewParam(back)).toBe(param);
    }
  });

  it('rounds camera numbers to 6 significant digits, idempotently', () => {
    expect(roundCameraNumber(1234567.89)).toBe(1234570);
    expect(roundCameraNumber(-0.0000123456789)).toBe(-0.0000123457);
    expect(Object.is(roundCameraNumber(-0), 0)).toBe(true);
    expect(roundCameraNumber(roundCameraNumber(Math.PI))).toBe(roundCameraNumber(Math.PI));
  });

  it(`carries at most ${URL_SELECTION_LIMIT} selected ids; beyond that the view must be saved`, () => {
    const fits = { ...defaultView(PROJECTION), selection: Array.from({ length: URL_SELECTION_LIMIT }, (_, i) => `e${i}`) };
    const tooMany = { ...fits, selection: [...fits.selection, 'one-more'] };
    expect(fitsInUrl(fits)).toBe(true);
    expect(decoded(encodeViewParam(fits)).selection).toHaveLength(URL_SELECTION_LIMIT);
    expect(fitsInUrl(tooMany)).toBe(false);
    expect(() => encodeViewParam(tooMany)).toThrow(/at most 200 selected entities/);
    const attempt = tryEncodeViewParam(tooMany);
    expect(attempt.ok).toBe(false);
    if (!attempt.ok) expect(attempt.error).toMatch(/save it as a view instead/);
    expect(tryEncodeViewParam(fits)).toEqual({ ok: true, param: encodeViewParam(fits) });
  });

  it('refuses to encode a view over the length limit or one that fails the schema', () => {
    const long = { ...defaultView(PROJECTION), selection: Array.from({ length: 100 }, (_, i) => `${i}-${'x'.repeat(200)}`) };
    expect(fitsInUrl(long)).toBe(false);
    expect(() => encodeViewParam(long)).toThrow(new RegExp(`more than ${URL_PARAM_MAX_LENGTH}`));
    const bad = { ...defaultView(PROJECTION), camera: { target: [0, 0], zoom: 99 } } as MapView;
    expect(() => encodeViewParam(bad)).toThrow(TypeError);
  });

  it('rejects garbage with a clear error', () => {
    const error = (param: string): string => {
      const result = decodeViewParam(param);
      expect(result.ok).toBe(false);
      return result.ok ? '' : result.error;
    };
    expect(error('')).toMatch(/should start with "v1\."/);
    expect(error('hello')).toMatch(/should start with "v1\."/);
    expect(error('v1.')).toMatch(/damaged/);
    expect(error('v1.abc$def')).toMatch(/not base64url/);
    expect(error('v1.A')).toMatch(/not base64url/);
    expect(error(`v1.${Buffer.from([0xff, 0xfe, 0x41]).toString('base64url')}`)).toMatch(/not UTF-8/);
    expect(error(`v1.${Buffer.from('{"p":').toString('base64url')}`)).toMatch(/not JSON/);
    expect(error(`v1.${Buffer.from('[1,2]').toString('base64url')}`)).toMatch(/not a JSON object/);
    expect(error(`v1.${Buffer.from('{"p":"x","c":[0,0,0]}').toString('base64url')}`)).toMatch(/projectionId must be a UUID/);
    expect(error(`v1.${Buffer.from(`{"p":"${PROJECTION}","c":[0,0,99]}`).toString('base64url')}`)).toMatch(/camera\.zoom: The zoom lies between/);
    expect(error(`v1.${Buffer.from(`{"p":"${PROJECTION}","c":[0,0]}`).toString('base64url')}`)).toMatch(/camera: expected \[x, y, zoom\]/);
    expect(error(`v1.${Buffer.from(`{"p":"${PROJECTION}","c":[0,0,1],"z":1}`).toString('base64url')}`)).toMatch(/unknown field "z"/);
    expect(error(`v1.${Buffer.from(`{"p":"${PROJECTION}","c":[0,0,1],"k":["cluster"]}`).toString('base64url')}`)).toMatch(/clusteringId/);
    expect(error('v1.' + 'A'.repeat(URL_PARAM_MAX_LENGTH))).toMatch(/too long/);
    const manyIds = JSON.stringify({ p: PROJECTION, c: [0, 0, 0], e: Array.from({ length: 201 }, (_, i) => String(i)) });
    expect(error(`v1.${Buffer.from(manyIds).toString('base64url')}`)).toMatch(/at most 200/);
  });

  it('never throws on arbitrary input (seeded random strings and mutated parameters)', () => {
    const random = mulberry32(424242);
    const alphabet = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_.=+/ %{}[]":,\u00e9\u4e2d\ud83d';
    const valid = encodeViewParam(FULL);
    let accepted = 0;
    for (let trial = 0; trial < 5000; trial++) {
      let param: string;
      if (trial % 3 === 0) {
        const length = Math.floor(random() * 200);
        param = Array.from({ length }, () => alphabet[Math.floor(random() * alphabet.length)]).join('');
      } else if (trial % 3 === 1) {
        // "v1." and random base64url: decodes to random bytes, exercising UTF-8 and JSON failures.
        const length = Math.floor(random() * 120);
        param = 'v1.' + Array.from({ length }, () => alphabet[Math.floor(random() * 64)]).join('');
      } else {
        // A valid parameter with one character changed, dropped or added.
        const at = Math.floor(random() * valid.length);
        const char = alphabet[Math.floor(random() * 64)] ?? 'A';
        const edit = Math.floor(random() * 3);
        param = edit === 0 ? valid.slice(0, at) + char + valid.slice(at + 1) : edit === 1 ? valid.slice(0, at) + valid.slice(at + 1) : valid.slice(0, at) + char + valid.slice(at);
      }
      const result = decodeViewParam(param);
      if (result.ok) {
        accepted++;
        // Whatever it accepts is a valid view.
        expect(mapViewSchema.safeParse(result.view).success).toBe(true);
      } else expect(result.error.length).toBeGreaterThan(10);
    }
    expect(accepted).toBeLessThan(5000);
  });

  it('never throws on values that are not strings at all', () => {
    for (const value of [undefined, null, 42, {}, []]) expect(decodeViewParam(value as unknown as string).ok).toBe(false);
  });
});
