/**
 * Box and lasso selection on the map, in data coordinates: which point indices fall inside, and how
 * a new hit combines with the current selection. Pure and allocation-light, for up to 1,000,000
 * points (coords as the float32 n × 2 array the coordinates endpoint sends).
 */

/** How a gesture changes the selection: replace it, add to it (shift), remove from it (alt). */
export type SelectionMode = 'replace' | 'add' | 'remove';

/** The mode for a gesture's modifier keys; alt wins over shift, since removing is the rarer intent. */
export function selectionModeOf(keys: { shiftKey: boolean; altKey: boolean }): SelectionMode {
  if (keys.altKey) return 'remove';
  if (keys.shiftKey) return 'add';
  return 'replace';
}

/**
 * Whether one edge (xi, yi)–(xj, yj) crosses the horizontal ray going right from (x, y). The
 * half-open test (yi > y) !== (yj > y) counts a vertex on the ray once, not twice, and skips
 * horizontal edges. Both pointInPolygon and indicesInPolygon call this, so they always agree.
 */
function crosses(x: number, y: number, xi: number, yi: number, xj: number, yj: number): boolean {
  return yi > y !== yj > y && x < ((xj - xi) * (y - yi)) / (yj - yi) + xi;
}

/**
 * Whether (x, y) is inside a polygon (x0, y0, x1, y1, …; closed implicitly) by the even-odd rule
 * (crossing number, as in W. R. Franklin's PNPOLY): a point is inside when a ray from it crosses the
 * boundary an odd number of times. That is well defined for concave and self-intersecting lassos —
 * the lobes of a bow-tie are inside, a region the lasso wraps twice is outside. Fewer than three
 * vertices enclose nothing; a trailing odd number is ignored.
 */
export function pointInPolygon(x: number, y: number, polygon: Float64Array): boolean {
  const vertices = polygon.length >> 1;
  if (vertices < 3) return false;
  let inside = false;
  let xj = polygon[2 * (vertices - 1)] ?? 0;
  let yj = polygon[2 * (vertices - 1) + 1] ?? 0;
  for (let i = 0; i < vertices; i++) {
    const xi = polygon[2 * i] ?? 0;
    const yi = polygon[2 * i + 1] ?? 0;
    if (crosses(x, y, xi, yi, xj, yj)) inside = !inside;
    xj = xi;
    yj = yi;
  }
  return inside;
}

/** Copies the first `count` entries into an exactly sized array (the scratch may be far larger). */
function trimmed(scratch: Uint32Array, count: number): Uint32Array {
  return scratch.slice(0, count);
}

/**
 * Indices (ascending) of the points inside a lasso polygon, even-odd rule as pointInPolygon. Two
 * things keep it fast at 10⁶ points with a lasso of hundreds of vertices: a bounding-box test
 * rejects most points with four comparisons, and the edges are bucketed into horizontal bands, so a
 * point inside the box tests only the few edges whose y-range meets its band instead of all of them.
 * Points with a NaN coordinate are never inside.
 */
export function indicesInPolygon(coords: Float32Array, polygon: Float64Array): Uint32Array {
  const n = coords.length >> 1;
  const vertices = polygon.length >> 1;
  if (vertices < 3 || n === 0) return new Uint32Array(0);

  let minX = Infinity;
  let minY = Infinity;
  let maxX = -Infinity;
  let maxY = -Infinity;
  for (let v = 0; v < vertices; v++) {
    const x = polygon[2 * v] ?? Number.NaN;
    const y = polygon[2 * v + 1] ?? Number.NaN;
    if (!Number.isFinite(x) || !Number.isFinite(y)) return new Uint32Array(0);
    if (x < minX) minX = x;
    if (x > maxX) maxX = x;
    if (y < minY) minY = y;
    if (y > maxY) maxY = y;
  }
  if (!(maxY > minY) || !(maxX > minX)) return new Uint32Array(0);

  // Bands: about one per edge (capped), each listing the edges whose closed y-range meets it, in a
  // compressed layout (bandStart offsets into bandEdges). An edge that crosses a point's horizontal
  // line has that y in its range, so it is listed in the point's band: no crossing is missed.
  const bands = Math.max(1, Math.min(4096, vertices));
  const bandHeight = (maxY - minY) / bands;
  const bandOf = (y: number): number => {
    const band = Math.floor((y - minY) / bandHeight);
    return band < 0 ? 0 : band >= bands ? bands - 1 : band;
  };
  const bandCount = new Int32Array(bands + 1);
  for (let i = 0, j = vertices - 1; i < vertices; j = i++) {
    const yi = polygon[2 * i + 1] ?? 0;
    const yj = polygon[2 * j + 1] ?? 0;
    const from = bandOf(Math.min(yi, yj));
    const to = bandOf(Math.max(yi, yj));
    for (let band = from; band <= to; band++) bandCount[band + 1] = (bandCount[band + 1] ?? 0) + 1;
  }
  const bandStart = new Int32Array(bands + 1);
  for (let band = 0; band < bands; band++) bandStart[band + 1] = (bandStart[band] ?? 0) + (bandCount[band + 1] ?? 0);
  // Each band's edges are stored as their endpoint coordinates (xi, yi, xj, yj), band after band,
  // so the inner loop reads memory in order rather than chasing edge indices into the polygon.
  const bandEdges = new Float64Array(4 * (bandStart[bands] ?? 0));
  const fill = bandStart.slice(0, bands);
  for (let i = 0, j = vertices - 1; i < vertices; j = i++) {
    const xi = polygon[2 * i] ?? 0;
    const yi = polygon[2 * i + 1] ?? 0;
    const xj = polygon[2 * j] ?? 0;
    const yj = polygon[2 * j + 1] ?? 0;
    const from = bandOf(Math.min(yi, yj));
    const to = bandOf(Math.max(yi, yj));
    for (let band = from; band <= to; band++) {
      const slot = fill[band] ?? 0;
      bandEdges[4 * slot] = xi;
      bandEdges[4 * slot + 1] = yi;
      bandEdges[4 * slot + 2] = xj;
      bandEdges[4 * slot + 3] = yj;
      fill[band] = slot + 1;
    }
  }

  const scratch = new Uint32Array(n);
  let count = 0;
  const lastBand = bands - 1;
  for (let p = 0; p < n; p++) {
    const x = coords[2 * p] ?? Number.NaN;
    const y = coords[2 * p + 1] ?? Number.NaN;
    // Written so that NaN fails every comparison and is rejected here.
    if (!(x >= minX && x <= maxX && y >= minY && y <= maxY)) continue;
    // bandOf, inlined: this is the hot loop.
    const raw = Math.floor((y - minY) / bandHeight);
    const band = raw < 0 ? 0 : raw > lastBand ? lastBand : raw;
    const end = 4 * (bandStart[band + 1] ?? 0);
    let inside = false;
    for (let e = 4 * (bandStart[band] ?? 0); e < end; e += 4) {
      if (crosses(x, y, bandEdges[e] ?? 0, bandEdges[e + 1] ?? 0, bandEdges[e + 2] ?? 0, bandEdges[e + 3] ?? 0)) inside = !inside;
    }
    if (inside) scratch[count++] = p;
  }
  return trimmed(scratch, count);
}

/**
 * Indices (ascending) of the points inside an axis-aligned box, edges included; the corners may come
 * in any order (a drag up and to the left is the same box).
 */
export function indicesInBox(coords: Float32Array, x0: number, y0: number, x1: number, y1: number): Uint32Array {
  const n = coords.length >> 1;
  const minX = Math.min(x0, x1);
  const maxX = Math.max(x0, x1);
  const minY = Math.min(y0, y1);
  const maxY = Math.max(y0, y1);
  if (!(minX <= maxX) || !(minY <= maxY)) return new Uint32Array(0);
  const scratch = new Uint32Array(n);
  let count = 0;
  for (let p = 0; p < n; p++) {
    const x = coords[2 * p] ?? Number.NaN;
    const y = coords[2 * p + 1] ?? Number.NaN;
    if (x >= minX && x <= maxX && y >= minY && y <= maxY) scratch[count++] = p;
  }
  return trimmed(scratch, count);
}

/**
 * The selection after a gesture: the hit alone (replace), the union (add) or the current selection
 * less the hit (remove), as ascending unique indices below n. Inputs need not be sorted or unique;
 * indices ≥ n are dropped. A byte mask of n entries makes it linear in n whatever the sizes.
 */
export function combineSelection(current: Uint32Array, hit: Uint32Array, mode: SelectionMode, n: number): Uint32Array {
  const size = Math.max(0, Math.floor(n));
  const mask = new Uint8Array(size);
  if (mode !== 'replace') for (let i = 0; i < current.length; i++) {
    const index = current[i] ?? size;
    if (index < size) mask[index] = 1;
  }
  const mark = mode === 'remove' ? 0 : 1;
  for (let i = 0; i < hit.length; i++) {
    const index = hit[i] ?? size;
    if (index < size) mask[index] = mark;
  }
  let count = 0;
  for (let i = 0; i < size; i++) count += mask[i] ?? 0;
  const result = new Uint32Array(count);
  let next = 0;
  for (let i = 0; i < size; i++) if (mask[i]) result[next++] = i;
  return result;
}

/**
 * A lasso path thinned as the pointer moves: a point is kept only when it lies at least `minStep`
 * from the previous kept one (the first is always kept), so a slow drag does not pile up thousands
 * of vertices. Non-finite points are dropped; a trailing odd number is ignored.
 */
export function simplifyLasso(points: Float64Array, minStep: number): Float64Array {
  const count = points.length >> 1;
  const out = new Float64Array(count * 2);
  const minSquared = minStep > 0 ? minStep * minStep : 0;
  let kept = 0;
  let lastX = 0;
  let lastY = 0;
  for (let i = 0; i < count; i++) {
    const x = points[2 * i] ?? Number.NaN;
    const y = points[2 * i + 1] ?? Number.NaN;
    if (!Number.isFinite(x) || !Number.isFinite(y)) continue;
    if (kept > 0) {
      const dx = x - lastX;
      const dy = y - lastY;
      if (dx * dx + dy * dy < minSquared) continue;
    }
    out[2 * kept] = x;
    out[2 * kept + 1] = y;
    kept++;
    lastX = x;
    lastY = y;
  }
  return out.slice(0, kept * 2);
}
