'use client';

import { useQuery } from '@tanstack/react-query';
import { jsonFetch } from '@/components/forms/json-fetch';
import type { DrawCloudAnswer, EntityData, NeighbourAnswer, PointData, WireAnnotation } from './types';

async function floats(url: string): Promise<{ values: Float32Array; bytes: number } | null> {
  const response = await fetch(url);
  if (response.status === 404 || response.status === 409) return null;
  if (!response.ok) {
    const body = (await response.json().catch(() => null)) as { error?: { message?: string } } | null;
    throw new Error(body?.error?.message ?? `Loading ${url} failed (${response.status})`);
  }
  const buffer = await response.arrayBuffer();
  return { values: new Float32Array(buffer), bytes: buffer.byteLength };
}

/** Coordinates straight into a Float32Array (8 bytes a point), never per-point objects. */
export async function loadPoints(projectionId: string): Promise<PointData> {
  const [coords, fidelity] = await Promise.all([floats(`/api/projections/${projectionId}/coords`), floats(`/api/projections/${projectionId}/fidelity`)]);
  if (!coords) throw new Error('This projection has no coordinates yet');
  const values = coords.values;
  const n = values.length / 2;
  let minX = Infinity;
  let maxX = -Infinity;
  let minY = Infinity;
  let maxY = -Infinity;
  for (let i = 0; i < n; i += 1) {
    const x = values[2 * i] as number;
    const y = values[2 * i + 1] as number;
    if (x < minX) minX = x;
    if (x > maxX) maxX = x;
    if (y < minY) minY = y;
    if (y > maxY) maxY = y;
  }
  // Projections above the exact-scoring limit store no per-point fidelity: an empty answer.
  const perPoint = fidelity && fidelity.values.length === n ? fidelity.values : null;
  return { n, coords: values, fidelity: perPoint, bounds: { minX, maxX, minY, maxY }, bytes: coords.bytes + (fidelity?.bytes ?? 0) };
}

export function usePoints(projectionId: string | undefined) {
  return useQuery({ queryKey: ['points', projectionId], queryFn: () => loadPoints(projectionId ?? ''), enabled: Boolean(projectionId), staleTime: Infinity });
}

export function useEntities(factorSetId: string) {
  return useQuery({
    queryKey: ['entity-columns', factorSetId],
    queryFn: () => jsonFetch<EntityData>(`/api/factor-sets/${factorSetId}/entities/columns`),
    staleTime: Infinity,
  });
}

/** How often an open map asks for annotation changes: well inside the 5 s a colleague's edit may take to show. */
export const ANNOTATION_POLL_MS = 2000;

export function annotationsKey(factorSetId: string) {
  return ['annotations', factorSetId] as const;
}

export function useAnnotations(factorSetId: string) {
  return useQuery({
    queryKey: annotationsKey(factorSetId),
    // `no-cache` revalidates with the ETag: an unchanged list costs a 304 and no member bytes.
    queryFn: () => jsonFetch<{ items: WireAnnotation[] }>(`/api/factor-sets/${factorSetId}/annotations?members=indices`, { cache: 'no-cache' }),
    refetchInterval: ANNOTATION_POLL_MS,
    refetchIntervalInBackground: false,
    staleTime: 0,
  });
}

export function useNeighbours(factorSetId: string, entityId: string | null, k: number, metric: 'euclidean' | 'cosine') {
  return useQuery({
    queryKey: ['neighbours', factorSetId, entityId, k, metric],
    queryFn: () =>
      jsonFetch<NeighbourAnswer>(`/api/factor-sets/${factorSetId}/neighbors?${new URLSearchParams({ entity: entityId ?? '', k: String(k), metric })}`),
    enabled: entityId !== null,
    staleTime: Infinity,
  });
}

export function useDrawCloud(projectionId: string, entityId: string | null, enabled: boolean) {
  return useQuery({
    queryKey: ['draws', projectionId, entityId],
    queryFn: () => jsonFetch<DrawCloudAnswer>(`/api/projections/${projectionId}/draws?${new URLSearchParams({ entity: entityId ?? '' })}`),
    enabled: enabled && entityId !== null,
    staleTime: Infinity,
  });
}
