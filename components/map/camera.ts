/**
 * The map camera: an orthographic view with y pointing up (a chart, not a screen), where one unit of
 * map coordinates spans 2^zoom pixels. Kept as our own small math so that selection, tests and the
 * benchmark can turn map coordinates into pixels without a WebGL context.
 */
export interface Camera {
  target: [number, number];
  zoom: number;
}

export interface Size {
  width: number;
  height: number;
}

export function toScreen(camera: Camera, size: Size, x: number, y: number): [number, number] {
  const scale = 2 ** camera.zoom;
  return [(x - camera.target[0]) * scale + size.width / 2, size.height / 2 - (y - camera.target[1]) * scale];
}

export function toWorld(camera: Camera, size: Size, sx: number, sy: number): [number, number] {
  const scale = 2 ** camera.zoom;
  return [(sx - size.width / 2) / scale + camera.target[0], (size.height / 2 - sy) / scale + camera.target[1]];
}

/** The camera that shows the whole bounding box with a margin (fraction of the view on each side). */
export function fitCamera(bounds: { minX: number; maxX: number; minY: number; maxY: number }, size: Size, margin = 0.06): Camera {
  const width = Math.max(bounds.maxX - bounds.minX, 1e-9);
  const height = Math.max(bounds.maxY - bounds.minY, 1e-9);
  const usableW = Math.max(size.width * (1 - 2 * margin), 1);
  const usableH = Math.max(size.height * (1 - 2 * margin), 1);
  const scale = Math.min(usableW / width, usableH / height);
  const zoom = Number.isFinite(scale) && scale > 0 ? Math.log2(scale) : 0;
  return { target: [(bounds.minX + bounds.maxX) / 2, (bounds.minY + bounds.maxY) / 2], zoom };
}

/** The camera centred on one point at a zoom that shows its neighbourhood. */
export function focusCamera(x: number, y: number, current: Camera, minZoom: number): Camera {
  return { target: [x, y], zoom: Math.max(current.zoom, minZoom) };
}
