import type { MetadataValue } from '@/lib/import/types';
import type { DbOrTx } from '@/lib/users/users';
import type { FactorSet } from './factor-sets';

/**
 * Everything the map needs to know about a factor set's entities, column by column in entity order:
 * ids and labels for hover and search, spread for size and colour, and each metadata column —
 * categories as levels + integer codes (a few bytes per point instead of a repeated string),
 * numbers and dates (as epoch milliseconds) as numbers.
 */
export type EntityColumn =
  | { name: string; type: 'category'; levels: string[]; codes: number[] }
  | { name: string; type: 'number' | 'date'; values: (number | null)[] };

export interface EntityColumns {
  count: number;
  ids: string[];
  labels: (string | null)[] | null;
  spread: (number | null)[] | null;
  columns: EntityColumn[];
}

/** Levels in first-seen order would make colours depend on row order; sorted levels keep them stable. */
function categoryColumn(name: string, cells: MetadataValue[]): EntityColumn {
  const levels = [...new Set(cells.filter((c): c is string | number => c !== null).map(String))].sort((a, b) => a.localeCompare(b, 'en'));
  const code = new Map(levels.map((l, i) => [l, i]));
  return { name, type: 'category', levels, codes: cells.map((c) => (c === null ? -1 : (code.get(String(c)) ?? -1))) };
}

export async function entityColumns(db: DbOrTx, factorSet: FactorSet): Promise<EntityColumns> {
  const rows = await db
    .selectFrom('factor_set_entities')
    .select(['entity_id', 'label', 'spread', 'metadata'])
    .where('factor_set_id', '=', factorSet.id)
    .orderBy('idx')
    .execute();
  const meta = rows.map((r) => (r.metadata ?? {}) as Record<string, MetadataValue>);
  const columns = factorSet.metadataColumns.map((column): EntityColumn => {
    const cells = meta.map((m) => m[column.name] ?? null);
    if (column.type === 'category') return categoryColumn(column.name, cells);
    if (column.type === 'date') return { name: column.name, type: 'date', values: cells.map((c) => (typeof c === 'string' ? Date.parse(c) : null)).map((v) => (v === null || Number.isNaN(v) ? null : v)) };
    return { name: column.name, type: 'number', values: cells.map((c) => (typeof c === 'number' && Number.isFinite(c) ? c : null)) };
  });
  const anyLabel = rows.some((r) => r.label !== null);
  return {
    count: rows.length,
    ids: rows.map((r) => r.entity_id),
    labels: anyLabel ? rows.map((r) => r.label) : null,
    spread: factorSet.draws > 0 ? rows.map((r) => r.spread) : null,
    columns,
  };
}
