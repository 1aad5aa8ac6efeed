import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, notFound } from '@/lib/api/errors';
import type { Action } from '@/lib/permissions';
import type { User } from '@/lib/users/users';
import { uuidParam } from '@/lib/validation/common';
import type { CreateViewInput, UpdateViewInput } from '@/lib/validation/views';
import { requireWorkspaceAccess } from '@/lib/workspaces/access';
import { findView, listViews, type SavedView } from './views';

const NOT_FOUND = 'View not found';

async function requireViewAccess(db: Kysely<Database>, actor: User, viewId: string, action: Action): Promise<SavedView> {
  if (!uuidParam.safeParse(viewId).success) throw notFound(NOT_FOUND);
  const view = await findView(db, viewId);
  if (!view) throw notFound(NOT_FOUND);
  try {
    await requireWorkspaceAccess(db, actor.id, view.workspaceId, action);
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) throw notFound(NOT_FOUND);
    throw error;
  }
  return view;
}

/** The projection a view shows must belong to the view's workspace (and its compare projection too). */
async function checkProjections(db: Kysely<Database>, workspaceId: string, ids: string[]): Promise<void> {
  const rows = await db
    .selectFrom('projections as p')
    .innerJoin('factor_sets as f', 'f.id', 'p.factor_set_id')
    .select(['p.id'])
    .where('p.id', 'in', ids)
    .where('f.workspace_id', '=', workspaceId)
    .execute();
  if (rows.length !== new Set(ids).size) throw new ApiError(400, 'unknown_projection', 'The view names a projection that is not in this workspace');
}

export async function listViewsFor(db: Kysely<Database>, actor: User, workspaceId: string): Promise<SavedView[]> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'workspace.view');
  return listViews(db, workspaceId);
}

export async function getViewFor(db: Kysely<Database>, actor: User, viewId: string): Promise<SavedView> {
  return requireViewAccess(db, actor, viewId, 'workspace.view');
}

export async function createViewAs(db: Kysely<Database>, actor: User, workspaceId: string, input: CreateViewInput): Promise<SavedView> {
  await requireWorkspaceAccess(db, actor.id, workspaceId, 'views.save');
  const { state } = input;
  await checkProjections(db, workspaceId, [state.projectionId, ...(state.compareProjectionId ? [state.compareProjectionId] : [])]);
  const row = await db
    .insertInto('views')
    .values({ workspace_id: workspaceId, projection_id: state.projectionId, name: input.name, state: JSON.stringify(state), created_by: actor.id })
    .returning('id')
    .executeTakeFirstOrThrow();
  const view = await findView(db, row.id);
  if (!view) throw notFound(NOT_FOUND);
  return view;
}

export async function updateViewAs(db: Kysely<Database>, actor: User, viewId: string, input: UpdateViewInput): Promise<SavedView> {
  const view = await requireViewAccess(db, actor, viewId, 'views.save');
  if (input.state) {
    await checkProjections(db, view.workspaceId, [input.state.projectionId, ...(input.state.compareProjectionId ? [input.state.compareProjectionId] : [])]);
  }
  let query = db
    .updateTable('views')
    .set((eb) => ({
      name: input.name ?? view.name,
      ...(input.state ? { state: JSON.stringify(input.state), projection_id: input.state.projectionId } : {}),
      version: eb('version', '+', 1),
      updated_at: new Date(),
    }))
    .where('id', '=', viewId);
  if (input.version !== undefined) query = query.where('version', '=', input.version);
  const result = await query.executeTakeFirst();
  if (Number(result.numUpdatedRows) === 0) {
    const current = await findView(db, viewId);
    if (!current) throw notFound(NOT_FOUND);
    throw new ApiError(409, 'stale_version', `Someone changed this view since you opened it (it is now at version ${current.version})`, { currentVersion: current.version });
  }
  const updated = await findView(db, viewId);
  if (!updated) throw notFound(NOT_FOUND);
  return updated;
}

export async function deleteViewAs(db: Kysely<Database>, actor: User, viewId: string): Promise<void> {
  await requireViewAccess(db, actor, viewId, 'views.save');
  await db.deleteFrom('views').where('id', '=', viewId).execute();
}
