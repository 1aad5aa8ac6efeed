import type { ProjectionRow, ProjectionStatus } from '@/db/types';
import { blockRanges, bytesOf, keysetBlocks, rowsPerBlock } from '@/lib/factor-sets/blocks';
import type { DbOrTx } from '@/lib/users/users';

export type ProjectionMethod = ProjectionRow['method'];

export interface ProjectionQuality {
  trustworthiness: Record<string, number | null>;
  continuity: Record<string, number | null>;
  knnPreservation: number;
  shepardRho: number;
  stress: number;
  explainedVariance?: number[];
  sammonStress?: number;
  /** Set when T, C and kNN preservation were estimated from this many sampled entities (factor sets above 20,000 entities). */
  sampledQueries?: number;
}

export interface Projection {
  id: string;
  factorSetId: string;
  method: ProjectionMethod;
  params: Record<string, unknown>;
  seed: number;
  status: ProjectionStatus;
  progress: number;
  phase: string | null;
  error: string | null;
  quality: ProjectionQuality | null;
  inputChecksum: string;
  versions: Record<string, string> | null;
  attempts: number;
  createdAt: Date;
  startedAt: Date | null;
  finishedAt: Date | null;
  durationMs: number | null;
}

export function toProjection(row: ProjectionRow): Projection {
  return {
    id: row.id,
    factorSetId: row.factor_set_id,
    method: row.method,
    params: row.params as Record<string, unknown>,
    seed: row.seed,
    status: row.status,
    progress: row.progress,
    phase: row.phase,
    error: row.error,
    quality: (row.quality ?? null) as ProjectionQuality | null,
    inputChecksum: row.input_checksum,
    versions: (row.versions ?? null) as Record<string, string> | null,
    attempts: row.attempts,
    createdAt: row.created_at,
    startedAt: row.started_at,
    finishedAt: row.finished_at,
    durationMs: row.duration_ms,
  };
}

/** Canonical JSON (keys sorted) of validated params, the dedup key of a request. */
export function paramsKey(params: Record<string, unknown>): string {
  return JSON.stringify(Object.fromEntries(Object.entries(params).sort(([a], [b]) => a.localeCompare(b))));
}

export async function findProjection(db: DbOrTx, id: string): Promise<Projection | undefined> {
  const row = await db.selectFrom('projections').selectAll().where('id', '=', id).executeTakeFirst();
  return row ? toProjection(row) : undefined;
}

export async function listProjections(db: DbOrTx, factorSetId: string): Promise<Projection[]> {
  const rows = await db.selectFrom('projections').selectAll().where('factor_set_id', '=', factorSetId).orderBy('created_at', 'desc').execute();
  return rows.map(toProjection);
}

/** Stores an N×width float32 result of a projection as row blocks. */
export async function writeProjectionBlocks(
  db: DbOrTx,
  projectionId: string,
  kind: 'coords' | 'fidelity',
  data: Float32Array,
  rows: number,
  width: number,
): Promise<void> {
  for (const { block, rowStart, rowCount } of blockRanges(rows, rowsPerBlock(width))) {
    await db
      .insertInto('projection_blocks')
      .values({
        projection_id: projectionId,
        kind,
        block,
        row_start: rowStart,
        row_count: rowCount,
        data: bytesOf(data, rowStart * width, rowCount * width),
      })
      .execute();
  }
}

export async function* readProjectionBlocks(db: DbOrTx, projectionId: string, kind: 'coords' | 'fidelity'): AsyncGenerator<Buffer> {
  const blocks = keysetBlocks((next) =>
    db
      .selectFrom('projection_blocks')
      .select(['block', 'data'])
      .where('projection_id', '=', projectionId)
      .where('kind', '=', kind)
      .where('block', '>=', next)
      .orderBy('block')
      .limit(1)
      .executeTakeFirst(),
  );
  for await (const row of blocks) yield row.data;
}
