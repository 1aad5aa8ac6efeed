'use client';

import { LinearInterpolator, OrthographicView, type PickingInfo } from '@deck.gl/core';
import { LineLayer, PathLayer, ScatterplotLayer, TextLayer } from '@deck.gl/layers';
import DeckGL from '@deck.gl/react';
import { type PointerEvent as ReactPointerEvent, useEffect, useMemo, useRef, useState } from 'react';
import type { Rgb } from '@/lib/map/palette';
import type { SelectionMode } from '@/lib/map/selection';
import { type Camera, type Size, toWorld } from './camera';
import type { PointData } from './types';

export type PointerTool = 'pan' | 'lasso' | 'box';

export interface CanvasLabel {
  text: string;
  position: [number, number];
}

export interface MapCanvasProps {
  /** Names this canvas for tests and assistive technology. */
  name: string;
  points: PointData;
  /** n × 4 RGBA. */
  colors: Uint8Array;
  /** n radii in pixels, or null for `fixedRadius` everywhere. */
  radii: Float32Array | null;
  fixedRadius: number;
  selected: Uint32Array;
  hovered: number | null;
  focus: number | null;
  labels: CanvasLabel[];
  neighbourLines: { from: [number, number]; to: [number, number] }[];
  cloud: { points: Float32Array; outline: [number, number][] } | null;
  camera: Camera;
  /** Animate the next camera change (a search flying to its match). */
  animate: boolean;
  onCamera: (camera: Camera) => void;
  onSize: (size: Size) => void;
  tool: PointerTool;
  onHover: (index: number | null, x: number, y: number) => void;
  onPick: (index: number | null, mode: SelectionMode) => void;
  onRegion: (polygon: Float64Array, mode: SelectionMode) => void;
  dark: boolean;
  /** Ink and paper of the current theme, for the label halo. */
  ink: Rgb;
  paper: Rgb;
}

const VIEW = new OrthographicView({ id: 'map', flipY: false, controller: true });
const TRANSITION = new LinearInterpolator({ transitionProps: ['target', 'zoom'] });

function modeOf(event: { shiftKey: boolean; altKey: boolean }): SelectionMode {
  return event.altKey ? 'remove' : event.shiftKey ? 'add' : 'replace';
}

/**
 * One WebGL map of a projection: deck.gl's orthographic view and scatterplot fed binary attributes
 * (the coordinates endpoint's Float32Array, a Uint8Array of colours), so a million points cost
 * three typed arrays and no per-point objects.
 */
export function MapCanvas(props: MapCanvasProps) {
  const { points, colors, radii, fixedRadius, selected, hovered, focus, camera, tool, dark } = props;
  const container = useRef<HTMLDivElement>(null);
  const [size, setSize] = useState<Size>({ width: 0, height: 0 });
  const [drawing, setDrawing] = useState<{ points: [number, number][]; mode: SelectionMode } | null>(null);
  const frames = useRef(0);
  const { onSize } = props;

  useEffect(() => {
    const element = container.current;
    if (!element) return;
    const observer = new ResizeObserver(([entry]) => {
      if (!entry) return;
      const next = { width: Math.round(entry.contentRect.width), height: Math.round(entry.contentRect.height) };
      setSize(next);
      onSize(next);
    });
    observer.observe(element);
    return () => observer.disconnect();
  }, [onSize]);

  const pointLayer = useMemo(
    () =>
      new ScatterplotLayer({
        id: 'points',
        data: {
          length: points.n,
          attributes: {
            getPosition: { value: points.coords, size: 2 },
            getFillColor: { value: colors, size: 4, normalized: true },
            ...(radii ? { getRadius: { value: radii, size: 1 } } : {}),
          },
        },
        getRadius: fixedRadius,
        radiusUnits: 'pixels',
        radiusMinPixels: 0.75,
        pickable: true,
        stroked: false,
      }),
    [points, colors, radii, fixedRadius],
  );

  const selectedLayer = useMemo(() => {
    const positions = new Float32Array(selected.length * 2);
    for (let s = 0; s < selected.length; s += 1) {
      const i = selected[s] as number;
      positions[2 * s] = points.coords[2 * i] as number;
      positions[2 * s + 1] = points.coords[2 * i + 1] as number;
    }
    return new ScatterplotLayer({
      id: 'selected',
      data: { length: selected.length, attributes: { getPosition: { value: positions, size: 2 } } },
      getRadius: fixedRadius + 2.5,
      radiusUnits: 'pixels',
      filled: false,
      stroked: true,
      lineWidthUnits: 'pixels',
      getLineWidth: 1.5,
      getLineColor: dark ? [236, 230, 218, 255] : [28, 27, 25, 255],
    });
  }, [selected, points, fixedRadius, dark]);

  const emphasis = useMemo(() => {
    const marks: { position: [number, number]; kind: 'hover' | 'focus' }[] = [];
    for (const [index, kind] of [
      [hovered, 'hover'],
      [focus, 'focus'],
    ] as const) {
      if (index === null || index < 0 || index >= points.n) continue;
      marks.push({ position: [points.coords[2 * index] as number, points.coords[2 * index + 1] as number], kind });
    }
    return new ScatterplotLayer<{ position: [number, number]; kind: 'hover' | 'focus' }>({
      id: 'emphasis',
      data: marks,
      getPosition: (d) => d.position,
      getRadius: (d) => (d.kind === 'focus' ? fixedRadius + 6 : fixedRadius + 4),
      radiusUnits: 'pixels',
      filled: false,
      stroked: true,
      lineWidthUnits: 'pixels',
      getLineWidth: (d) => (d.kind === 'focus' ? 2.5 : 2),
      getLineColor: dark ? [140, 195, 207, 255] : [30, 77, 92, 255],
    });
  }, [hovered, focus, points, fixedRadius, dark]);

  const layers = [
    pointLayer,
    new LineLayer<{ from: [number, number]; to: [number, number] }>({
      id: 'neighbour-lines',
      data: props.neighbourLines,
      getSourcePosition: (d) => d.from,
      getTargetPosition: (d) => d.to,
      getColor: dark ? [140, 195, 207, 200] : [30, 77, 92, 200],
      getWidth: 1.25,
      widthUnits: 'pixels',
    }),
    props.cloud &&
      new ScatterplotLayer({
        id: 'draw-cloud',
        data: { length: props.cloud.points.length / 2, attributes: { getPosition: { value: props.cloud.points, size: 2 } } },
        getRadius: 1.5,
        radiusUnits: 'pixels',
        getFillColor: dark ? [230, 192, 122, 150] : [122, 83, 16, 130],
      }),
    props.cloud &&
      new PathLayer<{ path: [number, number][] }>({
        id: 'draw-ellipse',
        data: [{ path: props.cloud.outline }],
        getPath: (d) => d.path,
        getColor: dark ? [230, 192, 122, 230] : [122, 83, 16, 230],
        getWidth: 1.5,
        widthUnits: 'pixels',
      }),
    selectedLayer,
    emphasis,
    new TextLayer<CanvasLabel>({
      id: 'annotation-labels',
      data: props.labels,
      getPosition: (d) => d.position,
      // Chart place names: capitals at a small size stand in for small caps, with a paper halo.
      getText: (d) => d.text.toUpperCase(),
      getSize: 12,
      sizeUnits: 'pixels',
      getColor: [...props.ink, 255],
      fontFamily: 'Inter, ui-sans-serif, system-ui, sans-serif',
      fontWeight: 600,
      characterSet: 'auto',
      fontSettings: { sdf: true, fontSize: 48, buffer: 8 },
      outlineWidth: 4,
      outlineColor: [...props.paper, 235],
      getTextAnchor: 'middle',
      getAlignmentBaseline: 'center',
    }),
  ];

  const region = (event: ReactPointerEvent<HTMLDivElement>): [number, number] => {
    const rect = event.currentTarget.getBoundingClientRect();
    return [event.clientX - rect.left, event.clientY - rect.top];
  };

  const finishRegion = () => {
    if (!drawing || drawing.points.length === 0) return setDrawing(null);
    let screen = drawing.points;
    if (tool === 'box' && screen.length >= 2) {
      const [a, b] = [screen[0] as [number, number], screen[screen.length - 1] as [number, number]];
      screen = [a, [b[0], a[1]], b, [a[0], b[1]]];
    }
    const polygon = new Float64Array(screen.length * 2);
    screen.forEach(([sx, sy], k) => {
      const [x, y] = toWorld(camera, size, sx, sy);
      polygon[2 * k] = x;
      polygon[2 * k + 1] = y;
    });
    setDrawing(null);
    if (screen.length >= 3) props.onRegion(polygon, drawing.mode);
  };

  const outline = drawing
    ? tool === 'box' && drawing.points.length >= 2
      ? (() => {
          const a = drawing.points[0] as [number, number];
          const b = drawing.points[drawing.points.length - 1] as [number, number];
          return `${a[0]},${a[1]} ${b[0]},${a[1]} ${b[0]},${b[1]} ${a[0]},${b[1]}`;
        })()
      : drawing.points.map(([x, y]) => `${x},${y}`).join(' ')
    : '';

  return (
    <div
      ref={container}
      className="map-paper relative h-full w-full overflow-hidden"
      data-testid={`map-canvas-${props.name}`}
      data-points={points.n}
      data-camera={JSON.stringify({ ...camera, ...size })}
    >
      <DeckGL
        views={VIEW}
        viewState={{ target: [camera.target[0], camera.target[1], 0], zoom: camera.zoom, minZoom: -20, maxZoom: 30, ...(props.animate ? { transitionDuration: 600, transitionInterpolator: TRANSITION } : {}) }}
        controller={{ dragPan: tool === 'pan', doubleClickZoom: false, scrollZoom: { smooth: false, speed: 0.02 }, inertia: false }}
        onViewStateChange={({ viewState }) => {
          const next = viewState as { target: number[]; zoom: number | number[] };
          const zoom = Array.isArray(next.zoom) ? (next.zoom[0] ?? 0) : next.zoom;
          props.onCamera({ target: [next.target[0] ?? 0, next.target[1] ?? 0], zoom });
        }}
        layers={layers}
        getCursor={({ isHovering, isDragging }) => (tool !== 'pan' ? 'crosshair' : isDragging ? 'grabbing' : isHovering ? 'pointer' : 'grab')}
        onHover={(info: PickingInfo) => props.onHover(info.layer?.id === 'points' && info.index >= 0 ? info.index : null, info.x, info.y)}
        onClick={(info: PickingInfo, event) => {
          if (tool !== 'pan') return;
          const source = event.srcEvent as MouseEvent;
          props.onPick(info.layer?.id === 'points' && info.index >= 0 ? info.index : null, modeOf(source));
        }}
        onAfterRender={() => {
          frames.current += 1;
          container.current?.setAttribute('data-frames', String(frames.current));
        }}
        onError={(error) => console.error('The map could not draw', error)}
        style={{ position: 'absolute', inset: '0' }}
      />
      {tool !== 'pan' && (
        <div
          className="absolute inset-0 cursor-crosshair touch-none"
          data-testid={`map-region-${props.name}`}
          onPointerDown={(event) => {
            event.currentTarget.setPointerCapture(event.pointerId);
            setDrawing({ points: [region(event)], mode: modeOf(event) });
          }}
          onPointerMove={(event) => {
            if (!drawing) return;
            const next = region(event);
            const last = drawing.points[drawing.points.length - 1];
            // Thin the path: a point every 3 px is plenty for a hand-drawn lasso.
            if (last && Math.hypot(next[0] - last[0], next[1] - last[1]) < 3) return;
            setDrawing({ ...drawing, points: tool === 'box' ? [drawing.points[0] ?? next, next] : [...drawing.points, next] });
          }}
          onPointerUp={finishRegion}
          onPointerCancel={() => setDrawing(null)}
        >
          <svg className="pointer-events-none absolute inset-0 h-full w-full" aria-hidden="true">
            {outline && <polygon points={outline} className="fill-accent/10 stroke-accent" strokeWidth={1.5} strokeDasharray="4 3" />}
          </svg>
        </div>
      )}
    </div>
  );
}
