import type { FitRow, ProjectionStatus } from '@/db/types';
import type { ResolvedFitSettings } from '@/lib/fit/settings';
import type { DbOrTx } from '@/lib/users/users';
import type { FitSummary, WireConvergence, WireFitMetrics } from './summary';

export type FitStatus = ProjectionStatus;

/** A fit as the app and the API see it; the stored model bytes stay in the database. */
export interface Fit {
  id: string;
  workspaceId: string;
  name: string;
  sourceName: string;
  sourceBytes: number;
  checksumSha256: string;
  settings: ResolvedFitSettings;
  status: FitStatus;
  progress: number;
  phase: string | null;
  error: string | null;
  observations: number;
  rowEntities: number;
  columnEntities: number;
  warnings: string[];
  metrics: WireFitMetrics | null;
  convergence: WireConvergence | null;
  summary: FitSummary | null;
  /** [row-entity factor set, column-entity factor set]; null before the fit is done or after a set was deleted. */
  factorSets: [string | null, string | null];
  rowFactorSetId: string | null;
  columnFactorSetId: string | null;
  attempts: number;
  createdBy: string | null;
  createdAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
  durationMs: number | null;
}

/** The columns of a fit row without the model bytes, which only predictions read. */
export const FIT_COLUMNS = [
  'id',
  'workspace_id',
  'name',
  'source_name',
  'source_bytes',
  'checksum_sha256',
  'settings',
  'status',
  'progress',
  'phase',
  'error',
  'observations',
  'row_entities',
  'column_entities',
  'warnings',
  'metrics',
  'convergence',
  'summary',
  'row_factor_set_id',
  'column_factor_set_id',
  'job_id',
  'attempts',
  'created_by',
  'created_at',
  'started_at',
  'finished_at',
  'duration_ms',
] as const satisfies readonly (keyof FitRow)[];

export type FitRowWithoutModel = Omit<FitRow, 'model'>;

export function toFit(row: FitRowWithoutModel): Fit {
  return {
    id: row.id,
    workspaceId: row.workspace_id,
    name: row.name,
    sourceName: row.source_name,
    sourceBytes: Number(row.source_bytes),
    checksumSha256: row.checksum_sha256,
    settings: row.settings as ResolvedFitSettings,
    status: row.status,
    progress: row.progress,
    phase: row.phase,
    error: row.error,
    observations: row.observations,
    rowEntities: row.row_entities,
    columnEntities: row.column_entities,
    warnings: (row.warnings ?? []) as string[],
    metrics: (row.metrics ?? null) as WireFitMetrics | null,
    convergence: (row.convergence ?? null) as WireConvergence | null,
    summary: (row.summary ?? null) as FitSummary | null,
    factorSets: [row.row_factor_set_id, row.column_factor_set_id],
    rowFactorSetId: row.row_factor_set_id,
    columnFactorSetId: row.column_factor_set_id,
    attempts: row.attempts,
    createdBy: row.created_by,
    createdAt: row.created_at,
    startedAt: row.started_at,
    finishedAt: row.finished_at,
    durationMs: row.duration_ms,
  };
}

/** A fit in a list: everything but the bulky summaries. */
export type FitListItem = Omit<Fit, 'convergence' | 'summary'>;

export async function findFit(db: DbOrTx, id: string): Promise<Fit | undefined> {
  const row = await db.selectFrom('fits').select(FIT_COLUMNS).where('id', '=', id).executeTakeFirst();
  return row ? toFit(row) : undefined;
}

export async function findFitJob(db: DbOrTx, id: string): Promise<{ jobId: string | null; status: FitStatus } | undefined> {
  const row = await db.selectFrom('fits').select(['job_id', 'status']).where('id', '=', id).executeTakeFirst();
  return row ? { jobId: row.job_id, status: row.status } : undefined;
}

export async function listFits(db: DbOrTx, workspaceId: string): Promise<FitListItem[]> {
  const rows = await db
    .selectFrom('fits')
    .select(FIT_COLUMNS.filter((c) => c !== 'convergence' && c !== 'summary'))
    .where('workspace_id', '=', workspaceId)
    .orderBy('created_at', 'desc')
    .orderBy('id')
    .execute();
  return rows.map((row) => {
    const { convergence: _c, summary: _s, ...rest } = toFit({ ...row, convergence: null, summary: null });
    return rest;
  });
}

/** The stored model bytes of a finished fit, or null. */
export async function fitModelBytes(db: DbOrTx, id: string): Promise<Buffer | null> {
  const row = await db.selectFrom('fits').select('model').where('id', '=', id).executeTakeFirst();
  return row?.model ?? null;
}
