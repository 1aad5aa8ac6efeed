import 'server-only';
import path from 'node:path';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { generalisedProcrustes } from '@/lib/align';
import { serverEnv } from '@/lib/env';
import { parseFactorFile } from '@/lib/import/parse';
import { ImportError, type ImportLimits, type ParsedFactors, type ParsedMatrix, type UploadedFile } from '@/lib/import/types';
import type { ImportFields } from '@/lib/validation/factor-sets';
import { rowsPerBlock, writeDrawBlocks, writeMatrixBlocks } from './blocks';
import { type BulkTransaction, copyField, withBulkTransaction } from './bulk';
import { type FactorSet, findFactorSet, type ImportReport } from './factor-sets';
import type { StagedFile } from './staging';

export function importLimits(): ImportLimits {
  const env = serverEnv();
  return { maxBytes: env.IMPORT_MAX_BYTES, maxRows: env.IMPORT_MAX_ROWS, maxDims: env.IMPORT_MAX_DIMS, maxDraws: env.IMPORT_MAX_DRAWS };
}

export function uploadRoot(): string {
  return path.resolve(serverEnv().UPLOAD_DIR);
}

export interface ImportSource {
  file: StagedFile;
  labels?: StagedFile;
}

export async function parseImport(source: ImportSource, fields: ImportFields, limits: ImportLimits): Promise<ParsedFactors> {
  const asUploaded = (f: StagedFile): UploadedFile => ({ path: f.path, name: f.name });
  return parseFactorFile(
    asUploaded(source.file),
    { ...fields.options, format: fields.format },
    limits,
    source.labels ? asUploaded(source.labels) : undefined,
  );
}

/** A matrix ready to store: point values, and with draws the aligned draws and their summaries. */
/** A factor set ready to store: ids, values and (aligned) draws. */
export interface Prepared {
  ids: string[];
  dims: number;
  values: Float32Array;
  draws: { count: number; aligned: Float32Array; sd: Float32Array; spread: Float32Array } | null;
}

function pointOnly(matrix: ParsedMatrix): Prepared {
  if (!matrix.values) throw new Error('a matrix without draws must carry values');
  return { ids: matrix.ids, dims: matrix.dims, values: matrix.values, draws: null };
}

/** Aligns posterior draws by generalised Procrustes (jointly with a partner from the same fit). */
function prepare(parsed: ParsedFactors): { main: Prepared; partner?: Prepared; alignment?: ImportReport['alignment'] } {
  if (!parsed.draws) return { main: pointOnly(parsed), partner: parsed.partner ? pointOnly(parsed.partner) : undefined };
  const n = parsed.ids.length;
  const partner = parsed.partner?.draws ? { draws: parsed.partner.draws, n: parsed.partner.ids.length } : undefined;
  const gpa = generalisedProcrustes(parsed.draws, parsed.drawCount, n, parsed.dims, { partner });
  const alignment = { method: 'generalised-procrustes' as const, iterations: gpa.iterations, converged: gpa.converged, joint: Boolean(partner) };
  const main: Prepared = {
    ids: parsed.ids,
    dims: parsed.dims,
    values: gpa.mean,
    draws: { count: parsed.drawCount, aligned: gpa.aligned, sd: gpa.sd, spread: gpa.spread },
  };
  if (!parsed.partner || !gpa.partner) return { main, alignment };
  return {
    main,
    alignment,
    partner: {
      ids: parsed.partner.ids,
      dims: parsed.partner.dims,
      values: gpa.partner.mean,
      draws: { count: parsed.drawCount, aligned: gpa.partner.aligned, sd: gpa.partner.sd, spread: gpa.partner.spread },
    },
  };
}

const COPY_CHUNK_ROWS = 5_000;

/** Entity rows as COPY text, a few thousand lines per chunk, so memory stays flat for a million entities. */
function* entityCopyChunks(
  sourceName: string,
  factorSetId: string,
  ids: string[],
  labels: (string | null)[] | null,
  metadata: ParsedFactors['metadata'] | null,
  columns: ParsedFactors['metadataColumns'],
  spread: Float32Array | null,
): Generator<string> {
  let lines: string[] = [];
  for (let i = 0; i < ids.length; i += 1) {
    const values = metadata?.[i];
    // PostgreSQL text cannot hold U+0000: refuse it as bad input rather than fail in COPY.
    if ((ids[i] ?? '').includes('\0') || (labels?.[i] ?? '').includes('\0') || values?.some((v) => typeof v === 'string' && v.includes('\0'))) {
      throw new ImportError('invalid_text', `entity ${i + 1} (id ${JSON.stringify(ids[i] ?? '')}) contains a NUL character, which cannot be stored`, sourceName, [
        { file: sourceName, index: `entity ${i + 1}`, message: 'NUL character in an id, label or metadata value' },
      ]);
    }
    const meta = values && columns.length ? JSON.stringify(Object.fromEntries(columns.map((c, j) => [c.name, values[j] ?? null]))) : null;
    lines.push(
      `${factorSetId}\t${i}\t${copyField(ids[i] ?? '')}\t${copyField(labels?.[i] ?? null)}\t${copyField(meta)}\t${copyField(spread ? (spread[i] ?? null) : null)}\n`,
    );
    if (lines.length === COPY_CHUNK_ROWS) {
      yield lines.join('');
      lines = [];
    }
  }
  if (lines.length) yield lines.join('');
}

/** Writes one factor set (row, entities by COPY, value and draw blocks) inside the caller's transaction. */
export async function insertPrepared(
  tx: BulkTransaction,
  input: {
    workspaceId: string;
    userId: string | null;
    name: string;
    format: string;
    source: Pick<StagedFile, 'name' | 'bytes' | 'sha256'>;
    report: ImportReport;
    prepared: Prepared;
    labels: (string | null)[] | null;
    metadata: ParsedFactors['metadata'] | null;
    metadataColumns: ParsedFactors['metadataColumns'];
    jointPartnerId?: string;
  },
): Promise<string> {
  const { prepared } = input;
  const rows = prepared.ids.length;
  const blockRows = rowsPerBlock(prepared.dims);
  const drawBlockRows = prepared.draws ? rowsPerBlock(prepared.draws.count * prepared.dims) : null;
  const [row] = await tx.execute(
    tx.builder
      .insertInto('factor_sets')
      .values({
      workspace_id: input.workspaceId,
      name: input.name,
      format: input.format,
      rows,
      dims: prepared.dims,
      draws: prepared.draws?.count ?? 0,
      block_rows: blockRows,
      draw_block_rows: drawBlockRows,
      source_name: input.source.name,
      source_bytes: input.source.bytes,
      checksum_sha256: input.source.sha256,
      metadata_columns: JSON.stringify(input.metadataColumns),
      parse_report: JSON.stringify(input.report),
      joint_partner_id: input.jointPartnerId ?? null,
      created_by: input.userId,
      })
      .returning('id'),
  );
  if (!row) throw new Error('insert into factor_sets returned no row');
  await tx.copy(
    'copy factor_set_entities (factor_set_id, idx, entity_id, label, metadata, spread) from stdin',
    entityCopyChunks(input.source.name, row.id, prepared.ids, input.labels, input.metadata, input.metadataColumns, prepared.draws?.spread ?? null),
  );
  await writeMatrixBlocks(tx, row.id, 'values', prepared.values, rows, prepared.dims, blockRows);
  if (prepared.draws && drawBlockRows) {
    await writeMatrixBlocks(tx, row.id, 'sd', prepared.draws.sd, rows, prepared.dims, blockRows);
    await writeDrawBlocks(tx, row.id, prepared.draws.aligned, prepared.draws.count, rows, prepared.dims, drawBlockRows);
  }
  return row.id;
}

function baseName(fileName: string): string {
  return fileName.replace(/\.[^.]+$/, '') || fileName;
}

/**
 * Stores a parsed import in one transaction: the factor set (and its joint partner), entities and
 * value blocks land together or not at all.
 */
export async function storeImport(
  db: Kysely<Database>,
  input: { workspaceId: string; userId: string; source: ImportSource; fields: ImportFields; parsed: ParsedFactors },
): Promise<{ factorSet: FactorSet; partner?: FactorSet; warnings: string[] }> {
  const { parsed, fields } = input;
  const { main, partner, alignment } = prepare(parsed);
  const name = fields.name ?? baseName(input.source.file.name);
  const report: ImportReport = {
    format: parsed.format,
    options: { ...fields.options, ...(fields.format ? { format: fields.format } : {}) },
    warnings: parsed.warnings,
    parameters: parsed.parameters,
    parameter: fields.options.parameter,
    alignment,
  };
  const ids = await withBulkTransaction(db, async (tx) => {
    const mainId = await insertPrepared(tx, {
      workspaceId: input.workspaceId,
      userId: input.userId,
      name,
      format: parsed.format,
      source: input.source.file,
      report,
      prepared: main,
      labels: parsed.labels,
      metadata: parsed.metadata,
      metadataColumns: parsed.metadataColumns,
    });
    if (!partner || !parsed.partner) return { mainId };
    const partnerId = await insertPrepared(tx, {
      workspaceId: input.workspaceId,
      userId: input.userId,
      name: `${name} · ${parsed.partner.parameter}`,
      format: parsed.format,
      source: input.source.file,
      report: { ...report, parameter: parsed.partner.parameter },
      prepared: partner,
      labels: null,
      metadata: null,
      metadataColumns: [],
      jointPartnerId: mainId,
    });
    await tx.execute(tx.builder.updateTable('factor_sets').set({ joint_partner_id: partnerId }).where('id', '=', mainId));
    return { mainId, partnerId };
  });
  const factorSet = await findFactorSet(db, ids.mainId);
  if (!factorSet) throw new Error('factor set vanished right after import');
  const partnerSet = ids.partnerId ? await findFactorSet(db, ids.partnerId) : undefined;
  return { factorSet, partner: partnerSet, warnings: parsed.warnings };
}
