import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, conflict, notFound } from '@/lib/api/errors';
import { validated } from '@/lib/api/route';
import { importLimits, uploadRoot } from '@/lib/factor-sets/import-service';
import { discardStaged, type StagedFile, stageMultipart } from '@/lib/factor-sets/staging';
import { predictPairs, rowAffinity } from '@/lib/fit/predict';
import { readObservationFile } from '@/lib/fit/read-observations';
import { type FitSettings, type ResolvedFitSettings, resolveFitSettings } from '@/lib/fit/settings';
import type { Design } from '@/lib/fit/observations';
import { plural, singleError } from '@/lib/import/places';
import { ImportError } from '@/lib/import/types';
import { FIT_QUEUE } from '@/lib/jobs/boss';
import { cancelJob, enqueueFit } from '@/lib/jobs/queue';
import type { Action } from '@/lib/permissions';
import type { User } from '@/lib/users/users';
import { uuidParam } from '@/lib/validation/common';
import { requireWorkspaceAccess } from '@/lib/workspaces/access';
import { type Fit, type FitListItem, findFit, fitModelBytes, listFits } from './fits';
import { discardFitInput, keepForFit } from './inputs';
import { decodeModel } from './model-bytes';
import { type FitUploadFields, fitUploadFieldsSchema, type PredictRequest } from './validation';

const NOT_FOUND = 'Fit not found';

/** A fit is visible to the members of its workspace; everyone else gets 404, as if it did not exist. */
export async function requireFitAccess(db: Kysely<Database>, actor: User, fitId: string, action: Action): Promise<Fit> {
  if (!uuidParam.safeParse(fitId).success) throw notFound(NOT_FOUND);
  const fit = await findFit(db, fitId);
  if (!fit) throw notFound(NOT_FOUND);
  await requireWorkspaceAccess(db, actor.id, fit.workspaceId, action).catch((error: unknown) => {
    if (error instanceof ApiError && error.status === 404) throw notFound(NOT_FOUND);
    throw error;
  });
  return fit;
}

export async function listFitsAs(db: Kysely<Database>, actor: User, workspaceId: string): Promise<FitListItem[]> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'workspace.view');
  return listFits(db, workspaceId);
}

/** Column-choice mistakes are in the request, not in the file: a 400 naming the column, like other bad settings. */
const SETTINGS_CODES = new Set(['unknown_column', 'same_column']);

/**
 * Reads the whole table now, in the request, so that every refusal the job would meet (a column
 * that is not in the header, an outcome that is not 0/1, a non-finite value, a single-level entity
 * column, a rank the data cannot support) is answered before anything is stored or queued. The job
 * reads the file again; that costs a second pass but keeps the design out of the queue.
 */
async function readDesign(file: StagedFile, settings: ResolvedFitSettings): Promise<Design> {
  let design: Design;
  try {
    design = await readObservationFile({ path: file.path, name: file.name }, settings);
  } catch (error) {
    if (error instanceof ImportError && SETTINGS_CODES.has(error.code)) {
      throw new ApiError(400, error.code, error.message, { file: error.file, places: error.places });
    }
    throw error;
  }
  const limits = importLimits();
  for (const [ids, what] of [
    [design.rowIds, 'row'],
    [design.columnIds, 'column'],
  ] as const) {
    if (ids.length > limits.maxRows) {
      throw singleError('too_many_entities', file.name, `${plural(ids.length, `${what} entity`, `${what} entities`)} is more than the limit of ${limits.maxRows} per factor set (IMPORT_MAX_ROWS)`);
    }
    const withNul = ids.findIndex((id) => id.includes('\0'));
    if (withNul >= 0) throw singleError('invalid_text', file.name, `the ${what} entity ${JSON.stringify(ids[withNul])} contains a NUL character, which cannot be stored`);
  }
  if (settings.folds !== 0 && settings.folds > design.n) {
    throw new ApiError(400, 'invalid_input', `folds: ${settings.folds} folds need at least as many observations; the file has ${design.n}. Choose fewer folds or 0.`);
  }
  return design;
}

function baseName(fileName: string): string {
  return fileName.replace(/\.[^.]+$/, '') || fileName;
}

/**
 * Checks a staged table and its settings, records the fit and queues its job. `source.dir` is the
 * staged upload's folder: on success it becomes the fit's input (removed when the job ends), on
 * refusal it is removed, so nothing is left either way.
 */
export async function submitFit(
  db: Kysely<Database>,
  actor: User,
  workspaceId: string,
  source: { dir: string; file: StagedFile },
  input: { name?: string; settings: FitSettings },
): Promise<Fit> {
  let fitId: string;
  try {
    await requireWorkspaceAccess(db, actor.id, workspaceId, 'factor-sets.fit');
    const settings = resolveFitSettings(input.settings);
    const design = await readDesign(source.file, settings);
    const row = await db
      .insertInto('fits')
      .values({
        workspace_id: workspaceId,
        name: input.name ?? baseName(source.file.name),
        source_name: source.file.name,
        source_bytes: source.file.bytes,
        checksum_sha256: source.file.sha256,
        settings: JSON.stringify(settings),
        status: 'queued',
        phase: 'queued',
        observations: design.n,
        row_entities: design.rowIds.length,
        column_entities: design.columnIds.length,
        warnings: JSON.stringify(design.warnings),
        created_by: actor.id,
      })
      .returning('id')
      .executeTakeFirstOrThrow();
    fitId = row.id;
  } catch (error) {
    await discardStaged(source.dir);
    throw error;
  }
  try {
    await keepForFit(source.dir, fitId);
  } catch (error) {
    await discardStaged(source.dir);
    await db.deleteFrom('fits').where('id', '=', fitId).execute();
    throw error;
  }
  try {
    const jobId = await enqueueFit({ fitId });
    await db.updateTable('fits').set({ job_id: jobId }).where('id', '=', fitId).execute();
  } catch (error) {
    await db.updateTable('fits').set({ status: 'failed', phase: 'failed', error: 'the job queue refused the fit; submit it again', finished_at: new Date() }).where('id', '=', fitId).execute();
    await discardFitInput(fitId);
    throw error;
  }
  const fit = await findFit(db, fitId);
  if (!fit) throw new Error('fit vanished right after it was queued');
  return fit;
}

/** `POST /api/workspaces/{id}/fits`: multipart with `file` (the long table), `settings` (JSON) and optional `name`. */
export async function submitFitUpload(db: Kysely<Database>, actor: User, workspaceId: string, request: Request): Promise<Fit> {
  // Refuse before reading the body, so a viewer's upload is not staged at all.
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'factor-sets.fit');
  const upload = await stageMultipart(request, uploadRoot(), importLimits().maxBytes);
  let fields: FitUploadFields;
  try {
    if (upload.labels) throw new ApiError(400, 'invalid_input', 'A fit takes one file, the long table, in the "file" field; there is no labels file');
    fields = validated(fitUploadFieldsSchema, upload.fields);
  } catch (error) {
    await discardStaged(upload.dir);
    throw error;
  }
  return submitFit(db, actor, workspaceId, { dir: upload.dir, file: upload.file }, fields);
}

export async function cancelFit(db: Kysely<Database>, actor: User, fitId: string): Promise<Fit> {
  const fit = await requireFitAccess(db, actor, fitId, 'factor-sets.fit');
  if (fit.status !== 'queued' && fit.status !== 'running') {
    throw conflict('not_running', `The fit is ${fit.status}; only queued or running fits can be cancelled`);
  }
  const row = await db
    .updateTable('fits')
    .set({ status: 'cancelled', phase: 'cancelled', finished_at: new Date() })
    .where('id', '=', fitId)
    .where('status', 'in', ['queued', 'running'])
    .returning(['job_id'])
    .executeTakeFirst();
  if (row?.job_id) await cancelJob(row.job_id, FIT_QUEUE).catch((error: unknown) => console.error(`fit ${fitId}: queue cancel failed`, error));
  // A running job stops at its next progress report and removes the input itself; a queued one never starts.
  if (fit.status === 'queued') await discardFitInput(fitId);
  const after = await findFit(db, fitId);
  if (!after) throw notFound(NOT_FOUND);
  return after;
}

/** Deletes the fit record; the factor sets it created stay (they may carry annotations and projections by now). */
export async function deleteFit(db: Kysely<Database>, actor: User, fitId: string): Promise<void> {
  const fit = await requireFitAccess(db, actor, fitId, 'factor-sets.fit');
  if (fit.status === 'queued' || fit.status === 'running') await cancelFit(db, actor, fitId);
  await db.deleteFrom('fits').where('id', '=', fitId).execute();
  await discardFitInput(fitId);
}

export interface PairPredictionWire {
  row: string;
  column: string;
  /** E[y]: the mean (gaussian), the probability of a 1 (bernoulli) or the expected count (poisson). */
  mean: number;
  /** Linear predictor μ + a_i + b_j + xᵀβ + γ_i·δ_j + offset. */
  eta: number;
  /** γ_i·δ_j alone (0 when either entity is unknown). */
  interaction: number;
  rowKnown: boolean;
  columnKnown: boolean;
}

export interface PredictResponse {
  fitId: string;
  likelihood: ResolvedFitSettings['likelihood'];
  /** What `mean` is on this fit's scale. */
  meanIs: 'mean' | 'probability' | 'expected count';
  covariateNames: string[];
  predictions: PairPredictionWire[];
}

const MEAN_IS: Record<ResolvedFitSettings['likelihood'], PredictResponse['meanIs']> = { gaussian: 'mean', bernoulli: 'probability', poisson: 'expected count' };

/** Lists up to five names and counts the rest, for messages. */
function someNames(names: readonly string[]): string {
  const shown = names.slice(0, 5).map((n) => JSON.stringify(n)).join(', ');
  return names.length > 5 ? `${shown} and ${names.length - 5} more` : shown;
}

export async function predictWithFit(db: Kysely<Database>, actor: User, fitId: string, input: PredictRequest): Promise<PredictResponse> {
  const fit = await requireFitAccess(db, actor, fitId, 'workspace.view');
  if (fit.status !== 'done') throw conflict('fit_not_done', `The fit is ${fit.status}; predictions need a finished fit`);
  const bytes = await fitModelBytes(db, fitId);
  if (!bytes) throw conflict('fit_not_done', 'This fit has no stored model; run it again');
  const model = decodeModel(bytes);
  const n = input.pairs.length;
  const p = model.covariateNames.length;
  if (!input.allowUnknown) {
    const rows = new Set(model.rowIds);
    const columns = new Set(model.columnIds);
    const unknownRows = [...new Set(input.pairs.map(([r]) => r).filter((r) => !rows.has(r)))];
    const unknownColumns = [...new Set(input.pairs.map(([, c]) => c).filter((c) => !columns.has(c)))];
    if (unknownRows.length || unknownColumns.length) {
      const parts = [
        unknownRows.length ? `${plural(unknownRows.length, `row entity (${fit.settings.rowColumn})`, `row entities (${fit.settings.rowColumn})`)} not in the fit: ${someNames(unknownRows)}` : null,
        unknownColumns.length ? `${plural(unknownColumns.length, `column entity (${fit.settings.columnColumn})`, `column entities (${fit.settings.columnColumn})`)} not in the fit: ${someNames(unknownColumns)}` : null,
      ].filter(Boolean);
      throw new ApiError(400, 'unknown_entity', `${parts.join('; ')}. Send allowUnknown: true to predict them from the prior (cold start).`, { rows: unknownRows, columns: unknownColumns });
    }
  }
  let covariates: Float64Array | undefined;
  if (input.covariates) {
    if (input.covariates.length !== n) throw new ApiError(400, 'invalid_input', `covariates: give one list per pair (${n}), got ${input.covariates.length}`);
    covariates = new Float64Array(n * p);
    input.covariates.forEach((values, t) => {
      if (values.length !== p) throw new ApiError(400, 'invalid_input', `covariates.${t}: this fit has ${p} covariate values per pair (${model.covariateNames.join(', ') || 'none'}), got ${values.length}`);
      covariates?.set(values, t * p);
    });
  }
  let offset: Float64Array | undefined;
  if (input.offset) {
    if (fit.settings.offset === null) throw new ApiError(400, 'invalid_input', 'offset: this fit has no offset column');
    if (input.offset.length !== n) throw new ApiError(400, 'invalid_input', `offset: give one value per pair (${n}), got ${input.offset.length}`);
    offset = new Float64Array(n);
    for (let t = 0; t < n; t++) {
      const value = input.offset[t] ?? 0;
      if (fit.settings.offsetScale === 'exposure') {
        if (!(value > 0)) throw new ApiError(400, 'invalid_input', `offset.${t}: this fit reads the offset as an exposure, which must be positive`);
        offset[t] = Math.log(value);
      } else offset[t] = value;
    }
  }
  const result = predictPairs(model, input.pairs, { covariates, offset });
  return {
    fitId,
    likelihood: model.likelihood,
    meanIs: MEAN_IS[model.likelihood],
    covariateNames: model.covariateNames,
    predictions: input.pairs.map(([row, column], t) => ({
      row,
      column,
      mean: result.mean[t] as number,
      eta: result.eta[t] as number,
      interaction: result.interaction[t] as number,
      rowKnown: result.rowKnown[t] === 1,
      columnKnown: result.columnKnown[t] === 1,
    })),
  };
}

/** The column entities a row entity has most affinity for: γ_i·δ_j, the interaction term alone. */
export async function affinityOf(db: Kysely<Database>, actor: User, fitId: string, rowEntity: string, limit: number): Promise<{ row: string; items: { column: string; affinity: number }[] }> {
  const fit = await requireFitAccess(db, actor, fitId, 'workspace.view');
  if (fit.status !== 'done') throw conflict('fit_not_done', `The fit is ${fit.status}; affinities need a finished fit`);
  const bytes = await fitModelBytes(db, fitId);
  if (!bytes) throw conflict('fit_not_done', 'This fit has no stored model; run it again');
  const model = decodeModel(bytes);
  const i = model.rowIds.indexOf(rowEntity);
  if (i < 0) throw new ApiError(400, 'unknown_entity', `The row entity ${JSON.stringify(rowEntity)} is not in the fit`);
  const values = rowAffinity(model, i);
  const order = Array.from(values.keys()).sort((x, y) => (values[y] as number) - (values[x] as number));
  return { row: rowEntity, items: order.slice(0, limit).map((j) => ({ column: model.columnIds[j] ?? '', affinity: values[j] as number })) };
}
