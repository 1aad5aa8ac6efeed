import { sql } from 'kysely';
import type { FactorSetRow } from '@/db/types';
import type { MetadataColumn, MetadataValue } from '@/lib/import/types';
import type { DbOrTx } from '@/lib/users/users';

export interface FactorSet {
  id: string;
  workspaceId: string;
  name: string;
  format: string;
  rows: number;
  dims: number;
  draws: number;
  sourceName: string;
  sourceBytes: number;
  checksumSha256: string;
  metadataColumns: MetadataColumn[];
  report: ImportReport;
  jointPartnerId: string | null;
  createdAt: Date;
}

/** What the import found and did, kept with the factor set so that it can be audited later. */
export interface ImportReport {
  format: string;
  options: Record<string, unknown>;
  warnings: string[];
  parameter?: string;
  parameters?: string[];
  alignment?: { method: 'generalised-procrustes'; iterations: number; converged: boolean; joint: boolean };
}

export function toFactorSet(row: FactorSetRow): FactorSet {
  return {
    id: row.id,
    workspaceId: row.workspace_id,
    name: row.name,
    format: row.format,
    rows: row.rows,
    dims: row.dims,
    draws: row.draws,
    sourceName: row.source_name,
    sourceBytes: Number(row.source_bytes),
    checksumSha256: row.checksum_sha256,
    metadataColumns: row.metadata_columns as MetadataColumn[],
    report: row.parse_report as ImportReport,
    jointPartnerId: row.joint_partner_id,
    createdAt: row.created_at,
  };
}

export async function listFactorSets(db: DbOrTx, workspaceId: string): Promise<FactorSet[]> {
  const rows = await db
    .selectFrom('factor_sets')
    .selectAll()
    .where('workspace_id', '=', workspaceId)
    .orderBy('created_at', 'desc')
    .orderBy('id')
    .execute();
  return rows.map(toFactorSet);
}

export async function findFactorSet(db: DbOrTx, id: string): Promise<FactorSet | undefined> {
  const row = await db.selectFrom('factor_sets').selectAll().where('id', '=', id).executeTakeFirst();
  return row ? toFactorSet(row) : undefined;
}

export async function deleteFactorSet(db: DbOrTx, id: string): Promise<void> {
  await db.deleteFrom('factor_sets').where('id', '=', id).execute();
}

export interface Entity {
  index: number;
  id: string;
  label: string | null;
  metadata: Record<string, MetadataValue>;
  spread: number | null;
}

export const ENTITY_SORTS = ['index', 'id', 'label', 'spread'] as const;
export type EntitySort = (typeof ENTITY_SORTS)[number] | `metadata:${string}`;

export interface EntityQuery {
  offset: number;
  limit: number;
  sort: EntitySort;
  descending: boolean;
  search?: string;
}

/** One page of entities, searched by id or label (case-insensitive substring), sorted on the server. */
export async function listEntities(db: DbOrTx, factorSetId: string, query: EntityQuery): Promise<{ items: Entity[]; total: number }> {
  let base = db.selectFrom('factor_set_entities').where('factor_set_id', '=', factorSetId);
  if (query.search) {
    const pattern = `%${query.search.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
    base = base.where((eb) => eb.or([eb('entity_id', 'ilike', pattern), eb('label', 'ilike', pattern)]));
  }
  const direction = query.descending ? sql`desc` : sql`asc`;
  const orderExpression = query.sort.startsWith('metadata:')
    ? // Numbers sort as numbers, everything else as text; the key is a bound parameter, never spliced.
      sql`case when jsonb_typeof(metadata -> ${query.sort.slice(9)}) = 'number' then (metadata ->> ${query.sort.slice(9)})::double precision end ${direction} nulls last, metadata ->> ${query.sort.slice(9)} ${direction} nulls last`
    : sql`${sql.ref(query.sort === 'index' ? 'idx' : query.sort === 'id' ? 'entity_id' : query.sort)} ${direction} nulls last`;
  const [rows, total] = await Promise.all([
    base
      .select(['idx', 'entity_id', 'label', 'metadata', 'spread'])
      .orderBy(orderExpression)
      .orderBy('idx')
      .offset(query.offset)
      .limit(query.limit)
      .execute(),
    base.select((eb) => eb.fn.countAll<number>().as('n')).executeTakeFirstOrThrow(),
  ]);
  return {
    items: rows.map((r) => ({
      index: r.idx,
      id: r.entity_id,
      label: r.label,
      metadata: (r.metadata ?? {}) as Record<string, MetadataValue>,
      spread: r.spread,
    })),
    total: Number(total.n),
  };
}

/** Entity ids in row order, for matching two factor sets. */
export async function entityIds(db: DbOrTx, factorSetId: string): Promise<string[]> {
  const rows = await db.selectFrom('factor_set_entities').select('entity_id').where('factor_set_id', '=', factorSetId).orderBy('idx').execute();
  return rows.map((r) => r.entity_id);
}
