import type { ColumnType, Generated, Insertable, Selectable, Updateable } from 'kysely';

/** Row types as PostgreSQL stores them. Domain types live in lib/ and are built by explicit mappers. */

type Timestamp = ColumnType<Date, Date | string | undefined, Date | string>;
type NullableTimestamp = ColumnType<Date | null, Date | string | null | undefined, Date | string | null>;

export type RoleColumn = 'owner' | 'analyst' | 'expert' | 'presenter' | 'reviewer' | 'viewer';

export interface UsersTable {
  id: Generated<string>;
  email: string;
  name: string | null;
  password_hash: string | null;
  email_verified_at: NullableTimestamp;
  /** Bumped when the password changes so that every earlier session stops working. */
  session_version: Generated<number>;
  created_at: Generated<Date>;
}

export interface VerificationTokensTable {
  identifier: string;
  /** Already hashed by Auth.js before it reaches the adapter. */
  token: string;
  expires_at: Timestamp;
}

export interface WorkspacesTable {
  id: Generated<string>;
  name: string;
  created_by: string | null;
  created_at: Generated<Date>;
  updated_at: Generated<Date>;
}

export interface MembershipsTable {
  workspace_id: string;
  user_id: string;
  role: RoleColumn;
  created_at: Generated<Date>;
}

export interface InvitationsTable {
  id: Generated<string>;
  workspace_id: string;
  email: string;
  role: RoleColumn;
  token_hash: string;
  invited_by: string | null;
  expires_at: Timestamp;
  accepted_at: NullableTimestamp;
  accepted_by: string | null;
  revoked_at: NullableTimestamp;
  created_at: Generated<Date>;
}

export interface AccessTokensTable {
  id: Generated<string>;
  user_id: string;
  name: string;
  token_hash: string;
  /** First characters of the token, shown so people can tell their tokens apart. */
  token_prefix: string;
  last_used_at: NullableTimestamp;
  revoked_at: NullableTimestamp;
  created_at: Generated<Date>;
}

export interface PasswordResetsTable {
  id: Generated<string>;
  user_id: string;
  token_hash: string;
  expires_at: Timestamp;
  used_at: NullableTimestamp;
  created_at: Generated<Date>;
}

export interface SignInFailuresTable {
  id: Generated<string>;
  email: string;
  address: string;
  created_at: Generated<Date>;
}

export interface FactorSetsTable {
  id: Generated<string>;
  workspace_id: string;
  name: string;
  format: string;
  rows: number;
  dims: number;
  draws: Generated<number>;
  /** Entities per block of the N×K matrices. */
  block_rows: number;
  /** Entities per block of the aligned draws (entity-major: each entity's D×K draws together). */
  draw_block_rows: number | null;
  source_name: string;
  source_bytes: number;
  checksum_sha256: string;
  metadata_columns: ColumnType<unknown, string, string>;
  parse_report: ColumnType<unknown, string, string>;
  joint_partner_id: string | null;
  created_by: string | null;
  created_at: Generated<Date>;
}

export interface FactorSetEntitiesTable {
  factor_set_id: string;
  idx: number;
  entity_id: string;
  label: string | null;
  metadata: ColumnType<unknown, string | null, string | null>;
  /** Mean distance of the entity's aligned draws from its mean; null without draws. */
  spread: number | null;
}

export type BlockKind = 'values' | 'sd' | 'draws';

export interface FactorSetBlocksTable {
  factor_set_id: string;
  kind: BlockKind;
  block: number;
  row_start: number;
  row_count: number;
  data: Buffer;
}

export interface FactorSetAlignmentsTable {
  id: Generated<string>;
  factor_set_id: string;
  target_id: string;
  matched: number;
  disparity: number;
  rotation: ColumnType<unknown, string, string>;
  created_by: string | null;
  created_at: Generated<Date>;
}

export type ProjectionStatus = 'queued' | 'running' | 'done' | 'failed' | 'cancelled';
export type ProjectionMethodColumn = 'pca' | 'umap' | 'sammon' | 'tsne';

export interface ProjectionsTable {
  id: Generated<string>;
  factor_set_id: string;
  method: ProjectionMethodColumn;
  params: ColumnType<unknown, string, string>;
  params_key: string;
  seed: number;
  input_checksum: string;
  status: ProjectionStatus;
  progress: Generated<number>;
  phase: string | null;
  error: string | null;
  quality: ColumnType<unknown, string | null, string | null>;
  versions: ColumnType<unknown, string | null, string | null>;
  job_id: string | null;
  attempts: Generated<number>;
  created_by: string | null;
  created_at: Generated<Date>;
  started_at: NullableTimestamp;
  finished_at: NullableTimestamp;
  duration_ms: number | null;
}

export interface ProjectionBlocksTable {
  projection_id: string;
  kind: 'coords' | 'fidelity';
  block: number;
  row_start: number;
  row_count: number;
  data: Buffer;
}

export interface ClusteringsTable {
  id: Generated<string>;
  factor_set_id: string;
  method: 'kmeans' | 'hdbscan';
  params: ColumnType<unknown, string, string>;
  params_key: string;
  seed: number;
  input_checksum: string;
  status: ProjectionStatus;
  progress: Generated<number>;
  phase: string | null;
  error: string | null;
  k: number | null;
  scores: ColumnType<unknown, string | null, string | null>;
  mean_silhouette: number | null;
  labels: Buffer | null;
  silhouette: Buffer | null;
  job_id: string | null;
  created_by: string | null;
  created_at: Generated<Date>;
  finished_at: NullableTimestamp;
  duration_ms: number | null;
}

export interface AnnotationsTable {
  id: Generated<string>;
  factor_set_id: string;
  name: string;
  color: string;
  description: Generated<string>;
  /** Sorted entity indices of the factor set, uint32 little-endian. */
  members: Buffer;
  member_count: number;
  version: Generated<number>;
  source_clustering_id: string | null;
  created_by: string | null;
  created_at: Generated<Date>;
  updated_by: string | null;
  updated_at: Generated<Date>;
}

export type AnnotationAction = 'created' | 'updated' | 'deleted';

export interface AnnotationChangesTable {
  id: Generated<string>;
  factor_set_id: string;
  annotation_id: string;
  version: number;
  action: AnnotationAction;
  changes: ColumnType<unknown, string, string>;
  actor_id: string | null;
  created_at: Generated<Date>;
}

export interface ViewsTable {
  id: Generated<string>;
  workspace_id: string;
  projection_id: string;
  name: string;
  state: ColumnType<unknown, string, string>;
  version: Generated<number>;
  created_by: string | null;
  created_at: Generated<Date>;
  updated_at: Generated<Date>;
}

export interface FactorSetPreferencesTable {
  factor_set_id: string;
  last_projection: ColumnType<unknown, string, string>;
  updated_by: string | null;
  updated_at: Generated<Date>;
}

export interface Database {
  users: UsersTable;
  verification_tokens: VerificationTokensTable;
  workspaces: WorkspacesTable;
  memberships: MembershipsTable;
  invitations: InvitationsTable;
  access_tokens: AccessTokensTable;
  password_resets: PasswordResetsTable;
  sign_in_failures: SignInFailuresTable;
  factor_sets: FactorSetsTable;
  factor_set_entities: FactorSetEntitiesTable;
  factor_set_blocks: FactorSetBlocksTable;
  factor_set_alignments: FactorSetAlignmentsTable;
  projections: ProjectionsTable;
  projection_blocks: ProjectionBlocksTable;
  clusterings: ClusteringsTable;
  annotations: AnnotationsTable;
  annotation_changes: AnnotationChangesTable;
  views: ViewsTable;
  factor_set_preferences: FactorSetPreferencesTable;
}

export type UserRow = Selectable<UsersTable>;
export type NewUserRow = Insertable<UsersTable>;
export type UserUpdate = Updateable<UsersTable>;
export type WorkspaceRow = Selectable<WorkspacesTable>;
export type NewWorkspaceRow = Insertable<WorkspacesTable>;
export type WorkspaceUpdate = Updateable<WorkspacesTable>;
export type MembershipRow = Selectable<MembershipsTable>;
export type NewMembershipRow = Insertable<MembershipsTable>;
export type InvitationRow = Selectable<InvitationsTable>;
export type NewInvitationRow = Insertable<InvitationsTable>;
export type AccessTokenRow = Selectable<AccessTokensTable>;
export type NewAccessTokenRow = Insertable<AccessTokensTable>;
export type PasswordResetRow = Selectable<PasswordResetsTable>;
export type FactorSetRow = Selectable<FactorSetsTable>;
export type NewFactorSetRow = Insertable<FactorSetsTable>;
export type FactorSetEntityRow = Selectable<FactorSetEntitiesTable>;
export type ProjectionRow = Selectable<ProjectionsTable>;
export type ClusteringRow = Selectable<ClusteringsTable>;
export type AnnotationRow = Selectable<AnnotationsTable>;
export type AnnotationChangeRow = Selectable<AnnotationChangesTable>;
export type ViewRow = Selectable<ViewsTable>;
export type NewViewRow = Insertable<ViewsTable>;
export type ViewUpdate = Updateable<ViewsTable>;

// Neighbour-graph cache (migration 2026-12-01-0006-knn-cache; lib/projections/knn-cache.ts).
export interface KnnGraphsTable {
  factor_set_id: string;
  metric: 'euclidean' | 'cosine';
  input_checksum: string;
  n: number;
  k: number;
  exact: boolean;
  seed: number;
  method: string;
  indices: Buffer;
  distances: Buffer;
  duration_ms: number;
  created_at: Generated<Date>;
}

// Declaration merging adds the table to Database above without editing it.
export interface Database {
  knn_graphs: KnnGraphsTable;
}

export type KnnGraphRow = Selectable<KnnGraphsTable>;

// Factorization-machine fits (migration 2026-12-01-0007-fits; lib/fits).
export interface FitsTable {
  id: Generated<string>;
  workspace_id: string;
  name: string;
  source_name: string;
  /** bigint: pg returns it as a string. */
  source_bytes: ColumnType<string, number | string, number | string>;
  checksum_sha256: string;
  settings: ColumnType<unknown, string, string>;
  status: ProjectionStatus;
  progress: Generated<number>;
  phase: string | null;
  error: string | null;
  observations: number;
  row_entities: number;
  column_entities: number;
  warnings: ColumnType<unknown, string | undefined, string>;
  metrics: ColumnType<unknown, string | null, string | null>;
  convergence: ColumnType<unknown, string | null, string | null>;
  summary: ColumnType<unknown, string | null, string | null>;
  model: Buffer | null;
  row_factor_set_id: string | null;
  column_factor_set_id: string | null;
  job_id: string | null;
  attempts: Generated<number>;
  created_by: string | null;
  created_at: Generated<Date>;
  started_at: NullableTimestamp;
  finished_at: NullableTimestamp;
  duration_ms: number | null;
}

export interface Database {
  fits: FitsTable;
}

export type FitRow = Selectable<FitsTable>;
export type NewFitRow = Insertable<FitsTable>;
