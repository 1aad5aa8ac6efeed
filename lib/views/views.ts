import type { ViewRow } from '@/db/types';
import type { MapView } from '@/lib/map/view-state';
import type { DbOrTx } from '@/lib/users/users';

export interface SavedView {
  id: string;
  workspaceId: string;
  projectionId: string;
  factorSetId: string;
  name: string;
  state: MapView;
  version: number;
  createdBy: { id: string; name: string } | null;
  createdAt: Date;
  updatedAt: Date;
}

type ViewRowWithContext = ViewRow & { factor_set_id: string; creator_name: string | null; creator_email: string | null };

export function toSavedView(row: ViewRowWithContext): SavedView {
  return {
    id: row.id,
    workspaceId: row.workspace_id,
    projectionId: row.projection_id,
    factorSetId: row.factor_set_id,
    name: row.name,
    state: row.state as MapView,
    version: row.version,
    createdBy: row.created_by ? { id: row.created_by, name: row.creator_name ?? row.creator_email ?? 'a former member' } : null,
    createdAt: row.created_at,
    updatedAt: row.updated_at,
  };
}

function withContext(db: DbOrTx) {
  return db
    .selectFrom('views as v')
    .innerJoin('projections as p', 'p.id', 'v.projection_id')
    .leftJoin('users as u', 'u.id', 'v.created_by')
    .selectAll('v')
    .select(['p.factor_set_id', 'u.name as creator_name', 'u.email as creator_email']);
}

export async function listViews(db: DbOrTx, workspaceId: string): Promise<SavedView[]> {
  const rows = await withContext(db).where('v.workspace_id', '=', workspaceId).orderBy('v.updated_at', 'desc').orderBy('v.id').execute();
  return rows.map(toSavedView);
}

export async function findView(db: DbOrTx, id: string): Promise<SavedView | undefined> {
  const row = await withContext(db).where('v.id', '=', id).executeTakeFirst();
  return row ? toSavedView(row) : undefined;
}
