// Type-only imports of the server's answer types (erased from the browser bundle), so the wire
// shapes the map reads cannot drift from what the routes send.
import type { Annotation } from '@/lib/annotations/annotations';
import type { EntityColumns } from '@/lib/factor-sets/entity-columns';
import type { NeighboursAnswer } from '@/lib/factor-sets/neighbours';
import type { DrawCloud } from '@/lib/uncertainty/draw-cloud';
import type { ProjectionQuality } from '@/lib/projections/projections';

/** What the map page hands the client: plain JSON, no Dates. */
export interface MapProjectionInfo {
  id: string;
  method: 'pca' | 'umap' | 'sammon' | 'tsne';
  params: Record<string, unknown>;
  seed: number;
  status: string;
  quality: ProjectionQuality | null;
  versions: Record<string, string> | null;
  inputChecksum: string;
  durationMs: number | null;
  createdAt: string;
}

export interface MapFactorSetInfo {
  id: string;
  name: string;
  rows: number;
  dims: number;
  draws: number;
  jointPartnerId: string | null;
}

export interface MapPermissions {
  editAnnotations: boolean;
  saveViews: boolean;
}

export interface PointData {
  n: number;
  /** n × 2 map coordinates in entity order. */
  coords: Float32Array;
  /** Per-point fidelity in [0, 1], or null when the projection stored none. */
  fidelity: Float32Array | null;
  bounds: { minX: number; maxX: number; minY: number; maxY: number };
  /** Bytes received for coordinates and fidelity together. */
  bytes: number;
}

/** The entity-columns endpoint's answer, as the server types it. */
export type EntityData = EntityColumns;

/** A server type as JSON delivers it: Dates become ISO strings. */
type Wire<T> = { [K in keyof T]: T[K] extends Date ? string : T[K] };

/** An annotation as `?members=indices` answers it. */
export type WireAnnotation = Wire<Annotation> & { indices?: number[] };

export interface WireClustering {
  id: string;
  method: string;
  status: string;
  k: number | null;
  meanSilhouette: number | null;
  labels?: number[];
}

export type NeighbourAnswer = NeighboursAnswer;

export type DrawCloudAnswer = DrawCloud;
