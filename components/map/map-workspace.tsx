'use client';

import dynamic from 'next/dynamic';
import { useQuery } from '@tanstack/react-query';
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import { jsonFetch } from '@/components/forms/json-fetch';
import { Button } from '@/components/ui/button';
import { PAPER_DARK, PAPER_LIGHT, type Rgb } from '@/lib/map/palette';
import { combineSelection, indicesInPolygon, type SelectionMode } from '@/lib/map/selection';
import { type MapView, tryEncodeViewParam, URL_SELECTION_LIMIT } from '@/lib/map/view-state';
import { AnnotationsPanel } from './annotations-panel';
import { type Camera, fitCamera, type Size } from './camera';
import { colourPoints, fadeOutside, filterMask, sizePoints } from './colouring';
import { EntityPanel } from './entity-panel';
import { FiltersPanel } from './filters-panel';
import { MapLegend, ProjectionScores } from './legend';
import type { PointerTool } from './map-canvas';
import { SearchBox } from './search-box';
import { SelectionTable } from './selection-table';
import type { MapFactorSetInfo, MapPermissions, MapProjectionInfo, PointData, WireClustering } from './types';
import { useAnnotations, useDrawCloud, useEntities, useNeighbours, usePoints } from './use-map-data';
import { ViewsPanel } from './views-panel';

// deck.gl needs a browser (WebGL, window): the canvas is never rendered on the server.
const MapCanvas = dynamic(() => import('./map-canvas').then((m) => m.MapCanvas), {
  ssr: false,
  loading: () => <p className="p-4 text-sm text-ink-muted">Preparing the map…</p>,
});

export const METHOD_LABELS: Record<MapProjectionInfo['method'], string> = { pca: 'PCA', umap: 'UMAP', sammon: 'Sammon mapping', tsne: 't-SNE' };

const INK_LIGHT: Rgb = [0x1c, 0x1b, 0x19];
const INK_DARK: Rgb = [0xec, 0xe6, 0xda];
const BASE_RADIUS = 3;

function usePrefersDark(): boolean {
  const [dark, setDark] = useState(false);
  useEffect(() => {
    const query = window.matchMedia('(prefers-color-scheme: dark)');
    setDark(query.matches);
    const listener = (event: MediaQueryListEvent) => setDark(event.matches);
    query.addEventListener('change', listener);
    return () => query.removeEventListener('change', listener);
  }, []);
  return dark;
}

function ellipsePath(e: { cx: number; cy: number; rx: number; ry: number; angle: number }): [number, number][] {
  const path: [number, number][] = [];
  const cos = Math.cos(e.angle);
  const sin = Math.sin(e.angle);
  for (let s = 0; s <= 64; s += 1) {
    const t = (s / 64) * 2 * Math.PI;
    const x = e.rx * Math.cos(t);
    const y = e.ry * Math.sin(t);
    path.push([e.cx + x * cos - y * sin, e.cy + x * sin + y * cos]);
  }
  return path;
}

export interface MapWorkspaceProps {
  workspaceId: string;
  factorSet: MapFactorSetInfo;
  projection: MapProjectionInfo;
  projections: MapProjectionInfo[];
  clusterings: WireClustering[];
  permissions: MapPermissions;
  initialView: MapView;
  /** Why the URL's view could not be used, if it could not. */
  viewProblem: string | null;
}

/** The map: one or two canvases of a factor set's projections, with selection, neighbours, annotations and views. */
export function MapWorkspace(props: MapWorkspaceProps) {
  const { factorSet, permissions } = props;
  const dark = usePrefersDark();
  const [view, setView] = useState<MapView>(props.initialView);
  const projectionById = useMemo(() => new Map(props.projections.map((p) => [p.id, p])), [props.projections]);
  const projection = projectionById.get(view.projectionId) ?? props.projection;
  const compare = view.compareProjectionId ? projectionById.get(view.compareProjectionId) : undefined;

  const points = usePoints(projection.id);
  const comparePoints = usePoints(compare?.id);
  const entities = useEntities(factorSet.id);
  const annotations = useAnnotations(factorSet.id);
  const annotationItems = useMemo(() => annotations.data?.items ?? [], [annotations.data]);

  const clusterId = view.colorBy.kind === 'cluster' ? (view.colorBy.clusteringId ?? null) : null;
  const clustering = useQuery({
    queryKey: ['clustering', clusterId],
    queryFn: () => jsonFetch<WireClustering>(`/api/clusterings/${clusterId}`),
    enabled: clusterId !== null,
    staleTime: Infinity,
  });
  const clusterLabels = useMemo(() => (clustering.data?.labels ? Int32Array.from(clustering.data.labels) : null), [clustering.data]);

  const n = points.data?.n ?? 0;
  const idIndex = useMemo(() => new Map((entities.data?.ids ?? []).map((id, i) => [id, i])), [entities.data]);

  // Selection lives as sorted indices; the view (and the URL) carry entity ids.
  const [selection, setSelection] = useState<Uint32Array>(() => new Uint32Array(0));
  const selectionSeeded = useRef(false);
  useEffect(() => {
    if (selectionSeeded.current || !entities.data) return;
    selectionSeeded.current = true;
    const picked = props.initialView.selection.map((id) => idIndex.get(id)).filter((i): i is number => i !== undefined);
    setSelection(combineSelection(new Uint32Array(0), Uint32Array.from(picked).sort(), 'replace', entities.data.count));
  }, [entities.data, idIndex, props.initialView.selection]);

  const [focus, setFocus] = useState<number | null>(null);
  const [hovered, setHovered] = useState<{ index: number; x: number; y: number; canvas: 'main' | 'compare' } | null>(null);
  const [tool, setTool] = useState<PointerTool>('pan');
  const [cameras, setCameras] = useState<{ main: Camera | null; compare: Camera | null }>({ main: null, compare: null });
  const [sizes, setSizes] = useState<{ main: Size; compare: Size }>({ main: { width: 0, height: 0 }, compare: { width: 0, height: 0 } });
  const [animate, setAnimate] = useState(false);

  // The first camera: the view's, else one that fits the data once the canvas has a size.
  useEffect(() => {
    if (!points.data || cameras.main || sizes.main.width === 0) return;
    const fromView = props.initialView.camera;
    const isDefault = fromView.zoom === 0 && fromView.target[0] === 0 && fromView.target[1] === 0;
    setCameras((c) => ({ ...c, main: isDefault ? fitCamera(points.data.bounds, sizes.main) : { target: fromView.target, zoom: fromView.zoom } }));
  }, [points.data, cameras.main, sizes.main, props.initialView.camera]);
  useEffect(() => {
    if (!comparePoints.data || cameras.compare || sizes.compare.width === 0) return;
    setCameras((c) => ({ ...c, compare: fitCamera(comparePoints.data.bounds, sizes.compare) }));
  }, [comparePoints.data, cameras.compare, sizes.compare]);

  // The URL always says what is on screen, so it can be pasted to a colleague.
  const ids = entities.data?.ids;
  const currentView = useMemo<MapView>(() => {
    const selected = ids ? Array.from(selection.subarray(0, URL_SELECTION_LIMIT), (i) => ids[i] ?? '').filter(Boolean) : view.selection;
    const camera = cameras.main ?? view.camera;
    return { ...view, camera: { target: [camera.target[0], camera.target[1]], zoom: camera.zoom }, selection: selected };
  }, [view, cameras.main, selection, ids]);
  useEffect(() => {
    const timer = window.setTimeout(() => {
      const url = new URL(window.location.href);
      // A selection too long for an address is left out of it (a saved view keeps up to 10,000 ids).
      const encoded = tryEncodeViewParam(currentView);
      const fallback = encoded.ok ? encoded : tryEncodeViewParam({ ...currentView, selection: [] });
      if (!fallback.ok) {
        console.error('The view could not be written into the address', fallback.error);
        return;
      }
      url.searchParams.delete('savedView');
      url.searchParams.set('view', fallback.param);
      window.history.replaceState(window.history.state, '', url);
    }, 300);
    return () => window.clearTimeout(timer);
  }, [currentView]);

  const colouring = useMemo(
    () => colourPoints(view.colorBy, n, { entities: entities.data, annotations: annotationItems, clusterLabels, fidelity: points.data?.fidelity ?? null, dark }),
    [view.colorBy, n, entities.data, annotationItems, clusterLabels, points.data, dark],
  );
  const mask = useMemo(() => filterMask(view.filters, entities.data, n), [view.filters, entities.data, n]);
  const colors = useMemo(() => fadeOutside(colouring.colors, mask), [colouring.colors, mask]);
  const radii = useMemo(() => sizePoints(view.sizeBy, entities.data, BASE_RADIUS), [view.sizeBy, entities.data]);
  const compareColors = useMemo(() => {
    if (!comparePoints.data || comparePoints.data.n !== n) return colors;
    if (view.colorBy.kind !== 'fidelity' || !comparePoints.data.fidelity) return colors;
    return fadeOutside(colourPoints(view.colorBy, n, { entities: entities.data, annotations: annotationItems, clusterLabels, fidelity: comparePoints.data.fidelity, dark }).colors, mask);
  }, [comparePoints.data, n, colors, view.colorBy, entities.data, annotationItems, clusterLabels, dark, mask]);

  const labelsFor = useCallback(
    (data: PointData | undefined) => {
      if (!data) return [];
      return annotationItems
        .filter((a) => (a.indices?.length ?? 0) > 0)
        .map((a) => {
          let sx = 0;
          let sy = 0;
          let count = 0;
          for (const i of a.indices ?? []) {
            if (i >= data.n) continue;
            sx += data.coords[2 * i] as number;
            sy += data.coords[2 * i + 1] as number;
            count += 1;
          }
          return { text: a.name, position: [sx / Math.max(count, 1), sy / Math.max(count, 1)] as [number, number] };
        });
    },
    [annotationItems],
  );

  const focusId = focus !== null ? (ids?.[focus] ?? null) : null;
  const neighbours = useNeighbours(factorSet.id, focusId, view.neighbors?.k ?? 10, view.neighbors?.metric ?? 'euclidean');
  const cloud = useDrawCloud(projection.id, focusId, factorSet.draws > 0);
  const compareCloud = useDrawCloud(compare?.id ?? '', focusId, factorSet.draws > 0 && Boolean(compare));

  const linesFor = (data: PointData | undefined) => {
    if (!data || focus === null || !neighbours.data) return [];
    const from: [number, number] = [data.coords[2 * focus] as number, data.coords[2 * focus + 1] as number];
    return neighbours.data.items.map((item) => ({ from, to: [data.coords[2 * item.index] as number, data.coords[2 * item.index + 1] as number] as [number, number] }));
  };
  const cloudFor = (answer: typeof cloud.data) => (answer ? { points: Float32Array.from(answer.points), outline: ellipsePath(answer.ellipse) } : null);

  const applySelection = useCallback(
    (hit: Uint32Array, mode: SelectionMode) => setSelection((current) => combineSelection(current, hit, mode, n)),
    [n],
  );

  const flyTo = useCallback(
    (index: number) => {
      const data = points.data;
      if (!data || !cameras.main) return;
      setAnimate(true);
      setFocus(index);
      setSelection(Uint32Array.of(index));
      const zoom = Math.max(cameras.main.zoom, fitCamera(data.bounds, sizes.main).zoom + 2);
      setCameras((c) => ({ ...c, main: { target: [data.coords[2 * index] as number, data.coords[2 * index + 1] as number], zoom } }));
      window.setTimeout(() => setAnimate(false), 700);
    },
    [points.data, cameras.main, sizes.main],
  );

  const fit = () => {
    if (points.data) setCameras((c) => ({ ...c, main: fitCamera(points.data.bounds, sizes.main), compare: comparePoints.data ? fitCamera(comparePoints.data.bounds, sizes.compare) : c.compare }));
  };

  const onMainSize = useCallback((size: Size) => setSizes((s) => ({ ...s, main: size })), []);
  const onCompareSize = useCallback((size: Size) => setSizes((s) => ({ ...s, compare: size })), []);

  const hoverText = hovered && entities.data ? describeEntity(entities.data, hovered.index, points.data?.fidelity ?? null) : null;
  const ink = dark ? INK_DARK : INK_LIGHT;
  const paper = dark ? PAPER_DARK : PAPER_LIGHT;

  const canvas = (which: 'main' | 'compare', data: PointData | undefined, info: MapProjectionInfo, camera: Camera | null) => (
    <section className="flex min-w-0 flex-1 flex-col border border-rule" aria-label={`Map of ${METHOD_LABELS[info.method]} projection`}>
      <header className="flex flex-wrap items-baseline justify-between gap-2 border-b border-rule bg-paper-raised px-3 py-1.5 text-xs">
        <span>
          <strong className="small-caps">{METHOD_LABELS[info.method]}</strong> · seed {info.seed}
        </span>
        <ProjectionScores projection={info} />
      </header>
      <div className="relative h-[62vh] min-h-[360px]">
        {data && (
          <MapCanvas
            name={which}
            points={data}
            colors={which === 'main' ? colors : compareColors}
            radii={radii}
            fixedRadius={BASE_RADIUS}
            selected={selection}
            hovered={hovered?.index ?? null}
            focus={focus}
            labels={labelsFor(data)}
            neighbourLines={linesFor(data)}
            cloud={cloudFor(which === 'main' ? cloud.data : compareCloud.data)}
            camera={camera ?? { target: [0, 0], zoom: 0 }}
            animate={which === 'main' && animate}
            onCamera={(next) => setCameras((c) => ({ ...c, [which]: next }))}
            onSize={which === 'main' ? onMainSize : onCompareSize}
            tool={tool}
            onHover={(index, x, y) => setHovered(index === null ? null : { index, x, y, canvas: which })}
            onPick={(index, mode) => {
              if (index === null) {
                if (mode === 'replace') setFocus(null);
                return;
              }
              setFocus(index);
              applySelection(Uint32Array.of(index), mode);
            }}
            onRegion={(polygon, mode) => applySelection(indicesInPolygon(data.coords, polygon), mode)}
            dark={dark}
            ink={ink}
            paper={paper}
          />
        )}
        {!data && (
          <p className="p-4 text-sm text-ink-muted" role="status">
            {(which === 'main' ? points : comparePoints).error ? `The map could not load: ${(which === 'main' ? points : comparePoints).error?.message}` : 'Loading coordinates…'}
          </p>
        )}
        {hovered && hovered.canvas === which && hoverText && (
          <div
            role="tooltip"
            data-testid="map-tooltip"
            className="pointer-events-none absolute z-10 max-w-xs border border-rule bg-paper-raised px-2 py-1.5 text-xs shadow-sm"
            style={{ left: Math.min(hovered.x + 12, (which === 'main' ? sizes.main : sizes.compare).width - 200), top: hovered.y + 12 }}
          >
            {hoverText}
          </div>
        )}
        <MapLegend legend={colouring.legend} method={info.method} />
      </div>
    </section>
  );

  const setColorBy = (value: string) => {
    if (value === 'none' || value === 'annotation' || value === 'fidelity' || value === 'spread') setView((v) => ({ ...v, colorBy: { kind: value } }));
    else if (value.startsWith('metadata:')) setView((v) => ({ ...v, colorBy: { kind: 'metadata', column: value.slice(9) } }));
    else if (value.startsWith('cluster:')) setView((v) => ({ ...v, colorBy: { kind: 'cluster', clusteringId: value.slice(8) } }));
  };
  const colorValue =
    view.colorBy.kind === 'metadata' ? `metadata:${view.colorBy.column}` : view.colorBy.kind === 'cluster' ? `cluster:${view.colorBy.clusteringId}` : view.colorBy.kind;
  const sizeValue = view.sizeBy.kind === 'metadata' ? `metadata:${view.sizeBy.column}` : view.sizeBy.kind;
  const numericColumns = entities.data?.columns.filter((c) => c.type !== 'category') ?? [];

  return (
    <div className="flex flex-col gap-4" data-testid="map-workspace" data-ready={points.data && entities.data ? 'true' : 'false'}>
      {props.viewProblem && (
        <p className="border border-caution/50 bg-caution-wash p-2 text-sm" role="alert">
          The link&apos;s view could not be used ({props.viewProblem}); showing the projection&apos;s default view.
        </p>
      )}
      <div className="flex flex-wrap items-end gap-3 text-sm" role="toolbar" aria-label="Map controls">
        <label className="flex flex-col gap-1">
          <span className="text-xs text-ink-muted">Projection</span>
          <select
            className="border border-rule bg-paper-raised px-2 py-1.5"
            value={view.projectionId}
            onChange={(e) => {
              setView((v) => ({ ...v, projectionId: e.target.value, compareProjectionId: v.compareProjectionId === e.target.value ? undefined : v.compareProjectionId }));
              setCameras((c) => ({ ...c, main: null }));
            }}
          >
            {props.projections.map((p) => (
              <option key={p.id} value={p.id}>
                {METHOD_LABELS[p.method]} · seed {p.seed} · {new Date(p.createdAt).toLocaleDateString('en-GB')}
              </option>
            ))}
          </select>
        </label>
        <label className="flex flex-col gap-1">
          <span className="text-xs text-ink-muted">Compare with</span>
          <select
            className="border border-rule bg-paper-raised px-2 py-1.5"
            value={view.compareProjectionId ?? ''}
            onChange={(e) => {
              setView((v) => ({ ...v, compareProjectionId: e.target.value || undefined }));
              setCameras((c) => ({ ...c, compare: null }));
            }}
          >
            <option value="">— one map —</option>
            {props.projections
              .filter((p) => p.id !== view.projectionId)
              .map((p) => (
                <option key={p.id} value={p.id}>
                  {METHOD_LABELS[p.method]} · seed {p.seed}
                </option>
              ))}
          </select>
        </label>
        <label className="flex flex-col gap-1">
          <span className="text-xs text-ink-muted">Colour by</span>
          <select className="border border-rule bg-paper-raised px-2 py-1.5" value={colorValue} onChange={(e) => setColorBy(e.target.value)}>
            <option value="none">— one colour —</option>
            {entities.data?.columns.map((c) => (
              <option key={c.name} value={`metadata:${c.name}`}>
                {c.name}
              </option>
            ))}
            <option value="annotation">Annotations</option>
            <option value="fidelity" disabled={!points.data?.fidelity}>
              Fidelity
            </option>
            <option value="spread" disabled={factorSet.draws === 0}>
              Posterior spread
            </option>
            {props.clusterings
              .filter((c) => c.status === 'done')
              .map((c) => (
                <option key={c.id} value={`cluster:${c.id}`}>
                  Cluster proposal: {c.method}, k = {c.k}
                </option>
              ))}
          </select>
        </label>
        <label className="flex flex-col gap-1">
          <span className="text-xs text-ink-muted">Size by</span>
          <select
            className="border border-rule bg-paper-raised px-2 py-1.5"
            value={sizeValue}
            onChange={(e) => {
              const value = e.target.value;
              setView((v) => ({ ...v, sizeBy: value.startsWith('metadata:') ? { kind: 'metadata', column: value.slice(9) } : { kind: value === 'spread' ? 'spread' : 'fixed' } }));
            }}
          >
            <option value="fixed">— one size —</option>
            <option value="spread" disabled={factorSet.draws === 0}>
              Posterior spread
            </option>
            {numericColumns.map((c) => (
              <option key={c.name} value={`metadata:${c.name}`}>
                {c.name}
              </option>
            ))}
          </select>
        </label>
        <fieldset className="flex items-center gap-1" aria-label="Pointer tool">
          <legend className="sr-only">Pointer tool</legend>
          {(['pan', 'lasso', 'box'] as const).map((t) => (
            <Button key={t} variant={tool === t ? 'primary' : 'secondary'} aria-pressed={tool === t} onClick={() => setTool(t)} className="px-2.5 py-1.5">
              {t === 'pan' ? 'Pan' : t === 'lasso' ? 'Lasso' : 'Box'}
            </Button>
          ))}
        </fieldset>
        <Button variant="secondary" onClick={fit} className="px-2.5 py-1.5">
          Fit to data
        </Button>
        <Button variant="secondary" onClick={() => setSelection(new Uint32Array(0))} disabled={selection.length === 0} className="px-2.5 py-1.5">
          Clear selection
        </Button>
        <SearchBox entities={entities.data} onPick={flyTo} />
      </div>
      <p className="text-xs text-ink-muted">
        Drag to pan, scroll to zoom. With Lasso or Box, drag to select; hold Shift to add, Alt to remove. Click a point to select it and list its
        latent neighbours.
      </p>
      <div className="flex flex-col gap-4 xl:flex-row">
        <div className="flex min-w-0 flex-[3] flex-col gap-3 lg:flex-row">
          {canvas('main', points.data, projection, cameras.main)}
          {compare && canvas('compare', comparePoints.data, compare, cameras.compare)}
        </div>
        <aside className="flex w-full flex-col gap-4 xl:w-80" aria-label="Map details">
          <EntityPanel
            entities={entities.data}
            focus={focus}
            fidelity={points.data?.fidelity ?? null}
            neighbours={neighbours.data}
            neighboursLoading={neighbours.isFetching}
            neighboursError={neighbours.error}
            cloud={cloud.data}
            hasDraws={factorSet.draws > 0}
            settings={view.neighbors ?? { k: 10, metric: 'euclidean' }}
            onSettings={(neighbors) => setView((v) => ({ ...v, neighbors }))}
            onFocus={flyTo}
          />
          <AnnotationsPanel
            factorSetId={factorSet.id}
            annotations={annotationItems}
            selection={selection}
            mayEdit={permissions.editAnnotations}
            clusterings={props.clusterings}
            clusterLabels={clusterLabels}
            clusteringId={clusterId}
            onSelect={(indices) => setSelection(combineSelection(new Uint32Array(0), Uint32Array.from(indices).sort(), 'replace', n))}
          />
          <FiltersPanel entities={entities.data} filters={view.filters} onChange={(filters) => setView((v) => ({ ...v, filters }))} />
          <ViewsPanel workspaceId={props.workspaceId} factorSetId={factorSet.id} maySave={permissions.saveViews} currentView={currentView} />
        </aside>
      </div>
      <SelectionTable entities={entities.data} selection={selection} fidelity={points.data?.fidelity ?? null} onFocus={flyTo} />
    </div>
  );
}

function describeEntity(entities: NonNullable<ReturnType<typeof useEntities>['data']>, index: number, fidelity: Float32Array | null) {
  const label = entities.labels?.[index];
  const id = entities.ids[index] ?? String(index);
  const spread = entities.spread?.[index];
  return (
    <div className="flex flex-col gap-0.5">
      <strong data-testid="map-tooltip-label">{label ?? id}</strong>
      {label && <span className="text-ink-muted">id {id}</span>}
      {entities.columns.slice(0, 6).map((c) => {
        const value = c.type === 'category' ? (c.levels[c.codes[index] ?? -1] ?? '—') : c.values[index];
        return (
          <span key={c.name} className="tabular">
            {c.name}: {value === null || value === undefined ? '—' : c.type === 'date' && typeof value === 'number' ? new Date(value).toISOString().slice(0, 10) : String(value)}
          </span>
        );
      })}
      {spread !== undefined && spread !== null && <span className="tabular">spread: {spread.toFixed(3)}</span>}
      {fidelity && <span className="tabular">fidelity: {(fidelity[index] ?? Number.NaN).toFixed(2)}</span>}
    </div>
  );
}
