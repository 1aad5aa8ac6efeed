import type { EntityColumn } from '@/lib/factor-sets/entity-columns';
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

export interface EntityData {
  count: number;
  ids: string[];
  labels: (string | null)[] | null;
  spread: (number | null)[] | null;
  columns: EntityColumn[];
}

export interface WireAnnotation {
  id: string;
  factorSetId: string;
  name: string;
  color: string;
  description: string;
  version: number;
  memberCount: number;
  sourceClusteringId: string | null;
  createdBy: { id: string; name: string } | null;
  createdAt: string;
  updatedBy: { id: string; name: string } | null;
  updatedAt: string;
  indices?: number[];
}

export interface WireClustering {
  id: string;
  method: string;
  status: string;
  k: number | null;
  meanSilhouette: number | null;
  labels?: number[];
}

export interface NeighbourAnswer {
  entity: { index: number; id: string; label: string | null };
  metric: 'euclidean' | 'cosine';
  items: { index: number; id: string; label: string | null; distance: number; similarity: number | null }[];
  partner: { factorSetId: string; name: string; items: { id: string; label: string | null; affinity: number }[] } | null;
}

export interface DrawCloudAnswer {
  entity: { index: number; id: string };
  placement: 'linear' | 'transform' | 'neighbours';
  draws: number;
  points: number[];
  ellipse: { cx: number; cy: number; rx: number; ry: number; angle: number };
}
