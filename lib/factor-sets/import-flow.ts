import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { notFound } from '@/lib/api/errors';
import { validated } from '@/lib/api/route';
import type { MetadataColumn, MetadataValue, ParsedFactors } from '@/lib/import/types';
import type { User } from '@/lib/users/users';
import { type ImportFields, importFieldsSchema } from '@/lib/validation/factor-sets';
import { requireWorkspaceAccess } from '@/lib/workspaces/access';
import type { FactorSet } from './factor-sets';
import { importLimits, parseImport, storeImport, uploadRoot } from './import-service';
import { claimStaged, discardStaged, recallStaged, rememberStaged, stageMultipart } from './staging';

/*
 * The two ways in: scripts post a file and get a factor set back in one call; the import page
 * uploads, shows the parse report, and stores only when the analyst confirms.
 */

function fieldsOf(raw: Record<string, string>): ImportFields {
  return validated(importFieldsSchema, raw);
}

export interface ImportResult {
  factorSet: FactorSet;
  partner?: FactorSet;
  warnings: string[];
}

export async function importInOneStep(db: Kysely<Database>, actor: User, workspaceId: string, request: Request): Promise<ImportResult> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'factor-sets.import');
  const limits = importLimits();
  const upload = await stageMultipart(request, uploadRoot(), limits.maxBytes);
  try {
    const fields = fieldsOf(upload.fields);
    const parsed = await parseImport(upload, fields, limits);
    return await storeImport(db, { workspaceId, userId: actor.id, source: upload, fields, parsed });
  } finally {
    await discardStaged(upload.dir);
  }
}

const PREVIEW_ROWS = 10;
const PREVIEW_DIMS = 8;

export interface ImportPreview {
  importId: string;
  fileName: string;
  bytes: number;
  sha256: string;
  format: string;
  rows: number;
  dims: number;
  draws: number;
  parameters: string[] | null;
  partner: { parameter: string; rows: number } | null;
  metadataColumns: MetadataColumn[];
  hasLabels: boolean;
  warnings: string[];
  /** First rows; with draws, the values are the first draw's, before alignment. */
  preview: { id: string; label: string | null; values: number[]; metadata: MetadataValue[] }[];
}

function previewOf(importId: string, file: { name: string; bytes: number; sha256: string }, parsed: ParsedFactors): ImportPreview {
  const shownDims = Math.min(parsed.dims, PREVIEW_DIMS);
  const source = parsed.values ?? parsed.draws;
  return {
    importId,
    fileName: file.name,
    bytes: file.bytes,
    sha256: file.sha256,
    format: parsed.format,
    rows: parsed.ids.length,
    dims: parsed.dims,
    draws: parsed.drawCount,
    parameters: parsed.parameters ?? null,
    partner: parsed.partner ? { parameter: parsed.partner.parameter, rows: parsed.partner.ids.length } : null,
    metadataColumns: parsed.metadataColumns,
    hasLabels: Boolean(parsed.labels),
    warnings: parsed.warnings,
    preview: parsed.ids.slice(0, PREVIEW_ROWS).map((id, i) => ({
      id,
      label: parsed.labels?.[i] ?? null,
      values: source ? Array.from(source.subarray(i * parsed.dims, i * parsed.dims + shownDims)) : [],
      metadata: parsed.metadata[i] ?? [],
    })),
  };
}

export async function stageForPreview(db: Kysely<Database>, actor: User, workspaceId: string, request: Request): Promise<ImportPreview> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'factor-sets.import');
  const limits = importLimits();
  const upload = await stageMultipart(request, uploadRoot(), limits.maxBytes);
  try {
    const parsed = await parseImport(upload, fieldsOf(upload.fields), limits);
    await rememberStaged(upload, { workspaceId, userId: actor.id });
    return previewOf(upload.id, upload.file, parsed);
  } catch (error) {
    await discardStaged(upload.dir);
    throw error;
  }
}

async function recallOwn(actor: User, importId: string) {
  const staged = await recallStaged(uploadRoot(), importId);
  // Someone else's upload is as good as absent.
  if (!staged || staged.userId !== actor.id) throw notFound('No upload is waiting under this id; upload the file again');
  return staged;
}

export async function confirmStaged(db: Kysely<Database>, actor: User, importId: string, name?: string): Promise<ImportResult> {
  await recallOwn(actor, importId);
  if (!(await claimStaged(uploadRoot(), importId))) throw notFound('No upload is waiting under this id; upload the file again');
  const staged = await recallStaged(uploadRoot(), importId, true);
  if (!staged) throw notFound('No upload is waiting under this id; upload the file again');
  try {
    await requireWorkspaceAccess(db, actor.id, staged.workspaceId, 'factor-sets.import');
    const fields = { ...fieldsOf(staged.fields), ...(name ? { name } : {}) };
    const parsed = await parseImport(staged, fields, importLimits());
    return await storeImport(db, { workspaceId: staged.workspaceId, userId: actor.id, source: staged, fields, parsed });
  } finally {
    await discardStaged(staged.dir);
  }
}

export async function discardOwnStaged(actor: User, importId: string): Promise<void> {
  await discardStaged((await recallOwn(actor, importId)).dir);
}
