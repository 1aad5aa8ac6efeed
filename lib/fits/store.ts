import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { generalisedProcrustes } from '@/lib/align';
import { type BulkTransaction, withBulkTransaction } from '@/lib/factor-sets/bulk';
import { insertPrepared } from '@/lib/factor-sets/import-service';
import type { ImportReport } from '@/lib/factor-sets/factor-sets';
import type { FitResult } from '@/lib/fit/fit-factorization-machine';
import type { MetadataColumn, MetadataValue } from '@/lib/import/types';
import { parseProjectionParams } from '@/lib/projection/params';
import { paramsKey } from '@/lib/projections/projections';
import type { Fit } from './fits';
import { encodeModel } from './model-bytes';
import { fitSummary, wireConvergence, wireFitMetrics } from './summary';

/*
 * Stores a finished fit: its two factor sets (row-entity factors γ and column-entity factors δ,
 * joint partners), their entities and blocks, and the fit row's results, in one transaction, so a
 * failure or a cancel at the last moment leaves nothing behind. The factor sets are laid out as
 * imports are (lib/factor-sets/import-service.ts), so everything downstream — projections, the
 * map, draw clouds, exports — treats them alike.
 */

/** The factor-set format of fitted sets (an import's format names the file type instead). */
export const FITTED_FORMAT = 'fit';

export class StoreCancelled extends Error {
  override name = 'AbortError';
}

interface Side {
  name: string;
  ids: string[];
  dims: number;
  values: Float32Array;
  draws: { count: number; aligned: Float32Array; sd: Float32Array; spread: Float32Array } | null;
  metadataColumns: MetadataColumn[];
  metadata: MetadataValue[][];
  report: ImportReport;
}

/** A fitted side is stored exactly as an imported factor set is (no labels: ids are the labels). */
function insertSide(tx: BulkTransaction, fit: Fit, side: Side, jointPartnerId: string | null): Promise<string> {
  return insertPrepared(tx, {
    workspaceId: fit.workspaceId,
    userId: fit.createdBy,
    name: side.name,
    format: FITTED_FORMAT,
    source: { name: fit.sourceName, bytes: fit.sourceBytes, sha256: fit.checksumSha256 },
    report: side.report,
    prepared: { ids: side.ids, dims: side.dims, values: side.values, draws: side.draws },
    labels: null,
    metadata: side.metadata,
    metadataColumns: side.metadataColumns,
    ...(jointPartnerId ? { jointPartnerId } : {}),
  });
}

function countsOf(index: Int32Array, size: number): Int32Array {
  const counts = new Int32Array(size);
  for (let t = 0; t < index.length; t++) counts[index[t] as number] = (counts[index[t] as number] as number) + 1;
  return counts;
}

/** Builds the two sides: point factors with MAP; with draws, the draws aligned jointly by generalised Procrustes, as imported draws are. */
export function fittedSides(fit: Fit, result: FitResult, observed: { row: Int32Array; column: Int32Array }): { rows: Side; columns: Side } {
  const model = result.model;
  const K = model.rank;
  const I = model.rowIds.length;
  const J = model.columnIds.length;
  const intervals = result.mainEffectIntervals;
  const rowCounts = countsOf(observed.row, I);
  const columnCounts = countsOf(observed.column, J);
  const metadataColumns: MetadataColumn[] = [
    { name: 'observations', type: 'number' },
    { name: 'main_effect', type: 'number' },
    ...(intervals ? [{ name: 'main_effect_sd', type: 'number' as const }] : []),
  ];
  const finiteOrNull = (v: number | undefined): number | null => (v === undefined || !Number.isFinite(v) ? null : v);
  const metadataOf = (count: number, effect: number | undefined, sd: number | undefined): MetadataValue[] => [count, finiteOrNull(effect), ...(intervals ? [finiteOrNull(sd)] : [])];
  const rowMetadata = model.rowIds.map((_, i) => metadataOf(rowCounts[i] as number, intervals ? intervals.a.mean[i] : model.a[i], intervals?.a.sd[i]));
  const columnMetadata = model.columnIds.map((_, j) => metadataOf(columnCounts[j] as number, intervals ? intervals.b.mean[j] : model.b[j], intervals?.b.sd[j]));
  const s = fit.settings;
  const baseReport = {
    format: FITTED_FORMAT,
    options: { fitId: fit.id, likelihood: s.likelihood, rank: s.rank, method: s.method, hierarchical: s.hierarchical, seed: s.seed, priorScale: s.priorScale, folds: s.folds },
    warnings: result.warnings,
  };
  const sideName = (column: string) => `${fit.name} · ${column} factors`;

  if (!result.draws) {
    return {
      rows: { name: sideName(s.rowColumn), ids: model.rowIds, dims: K, values: Float32Array.from(model.gamma), draws: null, metadataColumns, metadata: rowMetadata, report: { ...baseReport, parameter: 'gamma' } },
      columns: { name: sideName(s.columnColumn), ids: model.columnIds, dims: K, values: Float32Array.from(model.delta), draws: null, metadataColumns, metadata: columnMetadata, report: { ...baseReport, parameter: 'delta' } },
    };
  }
  const D = result.draws.count;
  const gpa = generalisedProcrustes(result.draws.gamma, D, I, K, { partner: { draws: result.draws.delta, n: J } });
  const partner = gpa.partner;
  if (!partner) throw new Error('joint alignment returned no partner');
  const alignment = { method: 'generalised-procrustes' as const, iterations: gpa.iterations, converged: gpa.converged, joint: true };
  return {
    rows: {
      name: sideName(s.rowColumn),
      ids: model.rowIds,
      dims: K,
      values: gpa.mean,
      draws: { count: D, aligned: gpa.aligned, sd: gpa.sd, spread: gpa.spread },
      metadataColumns,
      metadata: rowMetadata,
      report: { ...baseReport, parameter: 'gamma', alignment },
    },
    columns: {
      name: sideName(s.columnColumn),
      ids: model.columnIds,
      dims: K,
      values: partner.mean,
      draws: { count: D, aligned: partner.aligned, sd: partner.sd, spread: partner.spread },
      metadataColumns,
      metadata: columnMetadata,
      report: { ...baseReport, parameter: 'delta', alignment },
    },
  };
}

/** The seed of the PCA projections recorded for the fitted factor sets (the projection API's default, so a later identical request finds them). */
export const PROJECTION_SEED = 42;

/** A queued PCA projection row of a fitted factor set, recorded as the projection API records one. */
async function insertProjection(tx: BulkTransaction, factorSetId: string, rows: number, fit: Fit): Promise<string> {
  const params = { ...parseProjectionParams('pca', {}, rows) } as Record<string, unknown>;
  const [row] = await tx.execute(
    tx.builder
      .insertInto('projections')
      .values({
        factor_set_id: factorSetId,
        method: 'pca',
        params: JSON.stringify(params),
        params_key: paramsKey(params),
        seed: PROJECTION_SEED,
        input_checksum: fit.checksumSha256,
        status: 'queued',
        phase: 'queued',
        created_by: fit.createdBy,
      })
      .returning('id'),
  );
  if (!row) throw new Error('insert into projections returned no row');
  return row.id;
}

/**
 * One transaction: both factor sets, their link, a queued PCA projection row of each (the caller
 * sends their jobs after the commit), and the fit row marked done with its results. The fit row is
 * updated only while it is still running; if it was cancelled meanwhile the whole transaction
 * rolls back (StoreCancelled).
 */
export async function storeFit(
  db: Kysely<Database>,
  fit: Fit,
  result: FitResult,
  observed: { row: Int32Array; column: Int32Array },
  startedAt: number,
): Promise<{ rowFactorSetId: string; columnFactorSetId: string; projectionIds: string[] }> {
  const sides = fittedSides(fit, result, observed);
  return withBulkTransaction(db, async (tx) => {
    // Lock the row first, so a cancel arriving now waits for this transaction or wins before it.
    const [locked] = await tx.execute(tx.builder.selectFrom('fits').select('status').where('id', '=', fit.id).forUpdate());
    if (!locked || locked.status !== 'running') throw new StoreCancelled('the fit was cancelled before its results were stored');
    const rowFactorSetId = await insertSide(tx, fit, sides.rows, null);
    const columnFactorSetId = await insertSide(tx, fit, sides.columns, rowFactorSetId);
    await tx.execute(tx.builder.updateTable('factor_sets').set({ joint_partner_id: columnFactorSetId }).where('id', '=', rowFactorSetId));
    const updated = await tx.execute(
      tx.builder
        .updateTable('fits')
        .set({
          status: 'done',
          progress: 1,
          phase: 'done',
          error: null,
          warnings: JSON.stringify(result.warnings),
          metrics: JSON.stringify(wireFitMetrics(result.metrics)),
          convergence: JSON.stringify(wireConvergence(result)),
          summary: JSON.stringify(fitSummary(result)),
          model: encodeModel(result.model),
          row_factor_set_id: rowFactorSetId,
          column_factor_set_id: columnFactorSetId,
          finished_at: new Date(),
          duration_ms: Date.now() - startedAt,
        })
        .where('id', '=', fit.id)
        .where('status', '=', 'running')
        .returning('id'),
    );
    if (updated.length === 0) throw new StoreCancelled('the fit was cancelled before its results were stored');
    const projectionIds = [await insertProjection(tx, rowFactorSetId, sides.rows.ids.length, fit), await insertProjection(tx, columnFactorSetId, sides.columns.ids.length, fit)];
    return { rowFactorSetId, columnFactorSetId, projectionIds };
  });
}
