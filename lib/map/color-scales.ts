/**
 * Per-point colour and size attributes for the map's scatter layer, written straight into typed
 * arrays (RGBA bytes, float radii) that deck.gl takes as binary attributes: no per-point objects,
 * one pass over up to 1,000,000 points. Colours come from lib/map/palette.ts.
 */
import type { Rgb } from './color-math';
import {
  CATEGORICAL_DARK,
  CATEGORICAL_LIGHT,
  OTHER_COLOR_DARK,
  OTHER_COLOR_LIGHT,
  UNASSIGNED_COLOR_DARK,
  UNASSIGNED_COLOR_LIGHT,
} from './palette';

/** A numeric range; `min ≤ max` is expected, and `min === max` is handled. */
export interface Domain {
  min: number;
  max: number;
}

export type Ramp = (t: number, dark: boolean) => Rgb;

/** Number of entries in a ramp's lookup table: one per 8-bit step, finer than a ramp can show. */
export const RAMP_STEPS = 256;

function outputFor(out: Uint8Array | undefined, n: number, name: string): Uint8Array {
  if (!out) return new Uint8Array(n * 4);
  if (out.length < n * 4) throw new RangeError(`${name}: out holds ${out.length} bytes, ${n * 4} needed (n × 4 RGBA)`);
  return out;
}

/**
 * RGBA colours (n × 4 bytes, alpha 255) for category codes: 0–9 take the palette, 10 and above the
 * "other" grey, −1 (or any negative code) the pale "unassigned" grey.
 */
export function categoricalColors(codes: Int32Array, dark: boolean, out?: Uint8Array): Uint8Array {
  const n = codes.length;
  const target = outputFor(out, n, 'categoricalColors');
  const palette = dark ? CATEGORICAL_DARK : CATEGORICAL_LIGHT;
  const other = dark ? OTHER_COLOR_DARK : OTHER_COLOR_LIGHT;
  const unassigned = dark ? UNASSIGNED_COLOR_DARK : UNASSIGNED_COLOR_LIGHT;
  // A flat table indexed by code + 1 (slot 0 is "unassigned", the last is "other"), so the loop is
  // one clamp and four byte copies per point.
  const slots = palette.length + 2;
  const table = new Uint8Array(slots * 4);
  const put = (slot: number, rgb: Rgb): void => {
    table[slot * 4] = rgb[0];
    table[slot * 4 + 1] = rgb[1];
    table[slot * 4 + 2] = rgb[2];
    table[slot * 4 + 3] = 255;
  };
  put(0, unassigned);
  palette.forEach((rgb, index) => put(index + 1, rgb));
  put(slots - 1, other);
  const otherSlot = slots - 1;
  for (let i = 0; i < n; i++) {
    const code = codes[i] ?? -1;
    const slot = code < 0 ? 0 : code >= palette.length ? otherSlot : code + 1;
    const from = slot * 4;
    const to = i * 4;
    target[to] = table[from] ?? 0;
    target[to + 1] = table[from + 1] ?? 0;
    target[to + 2] = table[from + 2] ?? 0;
    target[to + 3] = 255;
  }
  return target;
}

// Lookup tables by ramp function and background, built once: a ramp is a pure function of (t, dark).
const rampTables = new WeakMap<Ramp, { light?: Uint8Array; dark?: Uint8Array }>();

/** The ramp sampled at RAMP_STEPS evenly spaced t from 0 to 1, as RGB bytes (cached). */
export function rampTable(ramp: Ramp, dark: boolean): Uint8Array {
  let entry = rampTables.get(ramp);
  if (!entry) {
    entry = {};
    rampTables.set(ramp, entry);
  }
  const cached = dark ? entry.dark : entry.light;
  if (cached) return cached;
  const table = new Uint8Array(RAMP_STEPS * 3);
  for (let step = 0; step < RAMP_STEPS; step++) {
    const rgb = ramp(step / (RAMP_STEPS - 1), dark);
    table[step * 3] = rgb[0];
    table[step * 3 + 1] = rgb[1];
    table[step * 3 + 2] = rgb[2];
  }
  if (dark) entry.dark = table;
  else entry.light = table;
  return table;
}

/**
 * RGBA colours (n × 4 bytes, alpha 255) for numeric values on a ramp. Values outside the domain take
 * the end colours (so a robust domain can clip outliers); NaN takes the "unassigned" grey; a domain
 * with min === max gives every finite value the ramp's middle.
 */
export function continuousColors(values: Float32Array, domain: Domain, ramp: Ramp, dark: boolean, out?: Uint8Array): Uint8Array {
  const n = values.length;
  const target = outputFor(out, n, 'continuousColors');
  const table = rampTable(ramp, dark);
  const missing = dark ? UNASSIGNED_COLOR_DARK : UNASSIGNED_COLOR_LIGHT;
  const min = domain.min;
  const span = domain.max - domain.min;
  const flat = !(span > 0) || !Number.isFinite(span);
  const scale = flat ? 0 : (RAMP_STEPS - 1) / span;
  const middle = (RAMP_STEPS - 1) >> 1;
  const last = RAMP_STEPS - 1;
  for (let i = 0; i < n; i++) {
    const value = values[i] ?? Number.NaN;
    const to = i * 4;
    target[to + 3] = 255;
    if (value !== value) {
      target[to] = missing[0];
      target[to + 1] = missing[1];
      target[to + 2] = missing[2];
      continue;
    }
    let step: number;
    if (flat) step = middle;
    else {
      // Rounded to the nearest table entry; comparisons (not Math.min/max) keep ±Infinity safe.
      const position = (value - min) * scale + 0.5;
      step = position <= 0 ? 0 : position >= last ? last : position | 0;
    }
    const from = step * 3;
    target[to] = table[from] ?? 0;
    target[to + 1] = table[from + 1] ?? 0;
    target[to + 2] = table[from + 2] ?? 0;
  }
  return target;
}

/**
 * Rearranges `a` so that a[k] holds the value a full sort would put there, everything before it is
 * ≤ and everything after ≥ (Hoare's selection, "Find", CACM 1961, with median-of-three pivots):
 * expected linear time, so a percentile of 10⁶ values costs a few passes instead of a sort.
 */
function selectInPlace(a: Float32Array, k: number): number {
  let left = 0;
  let right = a.length - 1;
  while (right > left) {
    const middle = (left + right) >> 1;
    const x = a[left] ?? 0;
    const y = a[middle] ?? 0;
    const z = a[right] ?? 0;
    const pivot = x < y ? (y < z ? y : x < z ? z : x) : x < z ? x : y < z ? z : y;
    let i = left;
    let j = right;
    while (i <= j) {
      while ((a[i] ?? 0) < pivot) i++;
      while ((a[j] ?? 0) > pivot) j--;
      if (i <= j) {
        const swap = a[i] ?? 0;
        a[i] = a[j] ?? 0;
        a[j] = swap;
        i++;
        j--;
      }
    }
    if (k <= j) right = j;
    else if (k >= i) left = i;
    else break;
  }
  return a[k] ?? 0;
}

/**
 * Linear-interpolation percentile (numpy's default, "type 7") of finite values, reordering them.
 * After selecting rank `below`, the next rank is the smallest value after it.
 */
function percentileInPlace(values: Float32Array, p: number): number {
  const position = (values.length - 1) * p;
  const below = Math.floor(position);
  const low = selectInPlace(values, below);
  if (below + 1 >= values.length || position === below) return low;
  let high = Infinity;
  for (let i = below + 1; i < values.length; i++) {
    const value = values[i] ?? Infinity;
    if (value < high) high = value;
  }
  return low + (high - low) * (position - below);
}

/**
 * A colour domain that one outlier cannot flatten: the 2nd to 98th percentile of the finite values
 * (NaN and ±Infinity ignored). Falls back to the full range when the percentiles meet (a column that
 * is nearly all one value with a few others), widens a constant column to value ± 0.5 so it still has
 * a legend, and gives { min: 0, max: 1 } when there is no finite value at all.
 */
export function robustDomain(values: Float32Array, lowerPercentile = 0.02, upperPercentile = 0.98): Domain {
  let count = 0;
  let least = Infinity;
  let most = -Infinity;
  for (let i = 0; i < values.length; i++) {
    const value = values[i] ?? Number.NaN;
    if (!Number.isFinite(value)) continue;
    count++;
    if (value < least) least = value;
    if (value > most) most = value;
  }
  if (count === 0) return { min: 0, max: 1 };
  // The finite values, copied (float32 to float32, so exactly) for selection to reorder.
  const finite = new Float32Array(count);
  let next = 0;
  for (let i = 0; i < values.length; i++) {
    const value = values[i] ?? Number.NaN;
    if (Number.isFinite(value)) finite[next++] = value;
  }
  let min = percentileInPlace(finite, lowerPercentile);
  let max = percentileInPlace(finite, upperPercentile);
  if (!(max > min)) {
    min = least;
    max = most;
  }
  if (!(max > min)) return { min: min - 0.5, max: min + 0.5 };
  return { min, max };
}

/** Heckbert's "nice number": a value of 1, 2, 5 or 10 × 10ᵏ near x (rounded, or at least x). */
function niceNumber(x: number, round: boolean): number {
  const exponent = Math.floor(Math.log10(x));
  const fraction = x / 10 ** exponent;
  let nice: number;
  if (round) nice = fraction < 1.5 ? 1 : fraction < 3 ? 2 : fraction < 7 ? 5 : 10;
  else nice = fraction <= 1 ? 1 : fraction <= 2 ? 2 : fraction <= 5 ? 5 : 10;
  return nice * 10 ** exponent;
}

/**
 * Round tick values for a legend, by P. Heckbert's "Nice numbers for graph labels" (Graphics Gems,
 * 1990): the step is a nice number near range / (count − 1), ticks are its multiples. Unlike his
 * loose labelling, which extends the axis to the outer ticks, a colour legend cannot extend past
 * its ramp, so only ticks inside the domain are returned (0–1 → 0, 0.2, …, 1; 0.013–0.987 → 0.2,
 * 0.4, 0.6, 0.8). Values are rounded to the step's decimals so 0.1 + 0.2 prints as 0.3.
 */
export function legendTicks(domain: Domain, count = 5): number[] {
  const low = Math.min(domain.min, domain.max);
  const high = Math.max(domain.min, domain.max);
  if (!Number.isFinite(low) || !Number.isFinite(high)) return [];
  if (high === low) return [low];
  const wanted = Math.max(2, Math.floor(Number.isFinite(count) ? count : 5));
  const range = niceNumber(high - low, false);
  const step = niceNumber(range / (wanted - 1), true);
  const decimals = Math.max(0, -Math.floor(Math.log10(step)));
  // A tolerance of a millionth of a step keeps a tick that floating point puts just outside.
  const tolerance = step * 1e-6;
  const first = Math.ceil((low - tolerance) / step);
  const lastIndex = Math.floor((high + tolerance) / step);
  const ticks: number[] = [];
  for (let k = first; k <= lastIndex; k++) {
    const tick = Number((k * step).toFixed(Math.min(20, decimals)));
    ticks.push(tick === 0 ? 0 : tick); // no −0 in a legend
  }
  return ticks;
}

/**
 * Fades the points outside a filter rather than hiding them: alpha `fadedAlpha` where keep[i] is 0,
 * 255 where it is 1, colours untouched. Setting both sides makes it safe to call again with a new
 * filter on the same buffer.
 */
export function applyFade(colors: Uint8Array, keep: Uint8Array, fadedAlpha = 40): void {
  const n = colors.length >> 2;
  if (keep.length < n) throw new RangeError(`applyFade: keep has ${keep.length} entries for ${n} points`);
  const faded = Math.min(255, Math.max(0, Math.round(fadedAlpha)));
  for (let i = 0; i < n; i++) colors[i * 4 + 3] = keep[i] ? 255 : faded;
}

/**
 * Point radii in pixels for a numeric column or posterior spread, area-proportional: the area
 * (radius²) grows linearly from minPx² at domain.min to maxPx² at domain.max, so a point's ink is in
 * proportion to its value — radius ∝ √value when minPx is 0. Values outside the domain are clamped;
 * NaN takes minPx, so a missing value never looks large.
 */
export function sizesFrom(values: Float32Array, domain: Domain, minPx: number, maxPx: number, out?: Float32Array): Float32Array {
  const n = values.length;
  if (out && out.length < n) throw new RangeError(`sizesFrom: out holds ${out.length} values, ${n} needed`);
  const target = out ?? new Float32Array(n);
  const minArea = minPx * minPx;
  const areaSpan = maxPx * maxPx - minArea;
  const span = domain.max - domain.min;
  const flat = !(span > 0) || !Number.isFinite(span);
  const middleRadius = Math.sqrt(minArea + areaSpan / 2);
  for (let i = 0; i < n; i++) {
    const value = values[i] ?? Number.NaN;
    if (value !== value) {
      target[i] = minPx;
      continue;
    }
    if (flat) {
      target[i] = middleRadius;
      continue;
    }
    const raw = (value - domain.min) / span;
    const t = raw <= 0 ? 0 : raw >= 1 ? 1 : raw;
    target[i] = Math.sqrt(minArea + t * areaSpan);
  }
  return target;
}
