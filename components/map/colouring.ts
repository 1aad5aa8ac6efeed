import { applyFade, categoricalColors, continuousColors, type Domain, legendTicks, robustDomain, sizesFrom } from '@/lib/map/color-scales';
import { categoricalColor, fidelityRamp, hexOf, type Rgb, sequentialRamp } from '@/lib/map/palette';
import type { MapView } from '@/lib/map/view-state';
import type { EntityData, WireAnnotation } from './types';

export type Legend =
  | { kind: 'none' }
  | { kind: 'categorical'; title: string; items: { label: string; color: string; count: number }[]; more: number }
  | { kind: 'continuous'; title: string; domain: Domain; ticks: number[]; stops: string[]; note?: string };

export interface Colouring {
  colors: Uint8Array;
  legend: Legend;
}

const LEGEND_ITEMS = 12;

function hexToRgb(hex: string): Rgb {
  const v = Number.parseInt(hex.slice(1), 16);
  return [(v >> 16) & 255, (v >> 8) & 255, v & 255];
}

function stopsOf(ramp: (t: number, dark: boolean) => Rgb, dark: boolean): string[] {
  return Array.from({ length: 9 }, (_, k) => hexOf(ramp(k / 8, dark)));
}

function toFloat32(values: readonly (number | null)[]): Float32Array {
  const out = new Float32Array(values.length);
  for (let i = 0; i < values.length; i += 1) out[i] = values[i] ?? Number.NaN;
  return out;
}

function categoricalLegend(title: string, codes: Int32Array, levels: readonly string[], dark: boolean): Legend {
  const counts = new Int32Array(levels.length);
  for (let i = 0; i < codes.length; i += 1) {
    const c = codes[i] as number;
    if (c >= 0 && c < levels.length) counts[c] = (counts[c] as number) + 1;
  }
  const items = levels.slice(0, LEGEND_ITEMS).map((label, code) => ({ label, color: hexOf(categoricalColor(code, dark)), count: counts[code] as number }));
  return { kind: 'categorical', title, items, more: Math.max(0, levels.length - LEGEND_ITEMS) };
}

function continuous(title: string, values: Float32Array, ramp: (t: number, dark: boolean) => Rgb, dark: boolean, fixed?: Domain, note?: string): Colouring {
  const domain = fixed ?? robustDomain(values);
  return { colors: continuousColors(values, domain, ramp, dark), legend: { kind: 'continuous', title, domain, ticks: legendTicks(domain), stops: stopsOf(ramp, dark), ...(note ? { note } : {}) } };
}

/** Point colours for the map's "colour by" choice, and the legend that explains them. */
export function colourPoints(
  colorBy: MapView['colorBy'],
  n: number,
  context: {
    entities: EntityData | undefined;
    annotations: WireAnnotation[];
    clusterLabels: Int32Array | null;
    fidelity: Float32Array | null;
    dark: boolean;
  },
): Colouring {
  const { entities, dark } = context;
  const plain = (): Colouring => ({ colors: categoricalColors(new Int32Array(n).fill(0), dark), legend: { kind: 'none' } });
  switch (colorBy.kind) {
    case 'metadata': {
      const column = entities?.columns.find((c) => c.name === colorBy.column);
      if (!column) return plain();
      if (column.type === 'category') {
        const codes = Int32Array.from(column.codes);
        return { colors: categoricalColors(codes, dark), legend: categoricalLegend(column.name, codes, column.levels, dark) };
      }
      return continuous(column.name, toFloat32(column.values), sequentialRamp, dark, undefined, column.type === 'date' ? 'dates' : undefined);
    }
    case 'cluster': {
      if (!context.clusterLabels) return plain();
      const labels = context.clusterLabels;
      let k = 0;
      for (let i = 0; i < labels.length; i += 1) k = Math.max(k, (labels[i] as number) + 1);
      const levels = Array.from({ length: k }, (_, c) => `Cluster ${c + 1}`);
      return { colors: categoricalColors(labels, dark), legend: categoricalLegend('Cluster proposal', labels, levels, dark) };
    }
    case 'annotation': {
      const codes = new Int32Array(n).fill(-1);
      const colors = categoricalColors(codes, dark);
      const items: { label: string; color: string; count: number }[] = [];
      // Later annotations paint over earlier ones where they overlap; the legend says so.
      for (const annotation of context.annotations) {
        const rgb = hexToRgb(annotation.color);
        for (const i of annotation.indices ?? []) {
          if (i >= n) continue;
          colors[4 * i] = rgb[0];
          colors[4 * i + 1] = rgb[1];
          colors[4 * i + 2] = rgb[2];
        }
        items.push({ label: annotation.name, color: annotation.color, count: annotation.memberCount });
      }
      return { colors, legend: { kind: 'categorical', title: 'Annotations (later ones on top)', items, more: 0 } };
    }
    case 'fidelity':
      if (!context.fidelity) return plain();
      return continuous('Fidelity (share of 15 latent neighbours kept)', context.fidelity, fidelityRamp, dark, { min: 0, max: 1 });
    case 'spread':
      if (!entities?.spread) return plain();
      return continuous('Posterior spread', toFloat32(entities.spread), sequentialRamp, dark);
    default:
      return plain();
  }
}

/** Radii in pixels for "size by", or null for one fixed size. Area grows with the value. */
export function sizePoints(sizeBy: MapView['sizeBy'], entities: EntityData | undefined, base: number): Float32Array | null {
  let values: Float32Array | null = null;
  if (sizeBy.kind === 'spread' && entities?.spread) values = toFloat32(entities.spread);
  if (sizeBy.kind === 'metadata') {
    const column = entities?.columns.find((c) => c.name === sizeBy.column);
    if (column && column.type !== 'category') values = toFloat32(column.values);
  }
  if (!values) return null;
  return sizesFrom(values, robustDomain(values), Math.max(1, base * 0.6), base * 2.6);
}

/** 1 where a point passes every filter, else 0 (those are faded, not hidden). Null when no filter is set. */
export function filterMask(filters: MapView['filters'], entities: EntityData | undefined, n: number): Uint8Array | null {
  if (filters.length === 0 || !entities) return null;
  const keep = new Uint8Array(n).fill(1);
  for (const filter of filters) {
    const column = entities.columns.find((c) => c.name === filter.column);
    if (!column) continue;
    if ('values' in filter && column.type === 'category') {
      const allowed = new Set(filter.values.map((v) => column.levels.indexOf(v)).filter((c) => c >= 0));
      for (let i = 0; i < n; i += 1) if (!allowed.has(column.codes[i] ?? -1)) keep[i] = 0;
    } else if ('min' in filter && column.type !== 'category') {
      for (let i = 0; i < n; i += 1) {
        const v = column.values[i];
        if (v === null || v === undefined || v < filter.min || v > filter.max) keep[i] = 0;
      }
    }
  }
  return keep;
}

export function fadeOutside(colors: Uint8Array, keep: Uint8Array | null): Uint8Array {
  if (!keep) return colors;
  const copy = colors.slice();
  applyFade(copy, keep);
  return copy;
}
