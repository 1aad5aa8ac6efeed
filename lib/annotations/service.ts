import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { ApiError, conflict, notFound } from '@/lib/api/errors';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { entityIds, type FactorSet } from '@/lib/factor-sets/factor-sets';
import type { Action } from '@/lib/permissions';
import { type DbOrTx, isUniqueViolation, type User } from '@/lib/users/users';
import type { CreateAnnotationInput, UpdateAnnotationInput } from '@/lib/validation/annotations';
import { uuidParam } from '@/lib/validation/common';
import {
  type Annotation,
  type AnnotationChange,
  type ChangeSummary,
  factorSetOfAnnotation,
  findAnnotation,
  listAnnotationChanges,
  listAnnotations,
  recordChange,
} from './annotations';
import { differenceSorted, membershipDelta, membersToBytes, sortedUnique, unionSorted } from './members';

const NOT_FOUND = 'Annotation not found';
const SAMPLE = 5;

export type MembersForm = 'ids' | 'indices' | 'none';

/** The API's answer for one annotation: its fields and its members in the form asked for. */
export interface AnnotationAnswer extends Annotation {
  entities?: string[];
  indices?: number[];
}

async function requireAnnotationAccess(db: Kysely<Database>, actor: User, annotationId: string, action: Action) {
  if (!uuidParam.safeParse(annotationId).success) throw notFound(NOT_FOUND);
  const factorSetId = await factorSetOfAnnotation(db, annotationId);
  if (!factorSetId) throw notFound(NOT_FOUND);
  try {
    return await requireFactorSetAccess(db, actor.id, factorSetId, action);
  } catch (error) {
    if (error instanceof ApiError && error.status === 404) throw notFound(NOT_FOUND);
    throw error;
  }
}

/** Entity ids → row indices; unknown ids are refused by name, so nothing is silently dropped. */
async function indicesOfEntities(db: DbOrTx, factorSetId: string, ids: readonly string[]): Promise<Uint32Array> {
  if (ids.length === 0) return new Uint32Array(0);
  const unique = [...new Set(ids)];
  const found = new Map<string, number>();
  // Chunks keep each array parameter well inside PostgreSQL's limits and the planner on the index.
  for (let start = 0; start < unique.length; start += 50_000) {
    const chunk = unique.slice(start, start + 50_000);
    const rows = await db
      .selectFrom('factor_set_entities')
      .select(['idx', 'entity_id'])
      .where('factor_set_id', '=', factorSetId)
      .where('entity_id', '=', (eb) => eb.fn.any(eb.val(chunk)))
      .execute();
    for (const r of rows) found.set(r.entity_id, r.idx);
  }
  const missing = unique.filter((id) => !found.has(id));
  if (missing.length > 0) {
    const shown = missing.slice(0, SAMPLE).map((id) => `"${id}"`).join(', ');
    throw new ApiError(400, 'unknown_entities', `${missing.length} entit${missing.length === 1 ? 'y is' : 'ies are'} not in this factor set: ${shown}${missing.length > SAMPLE ? ', …' : ''}`, {
      missing: missing.slice(0, 100),
    });
  }
  return sortedUnique(unique.map((id) => found.get(id) as number));
}

function checkIndices(factorSet: FactorSet, indices: readonly number[]): Uint32Array {
  const bad = indices.find((i) => i >= factorSet.rows);
  if (bad !== undefined) throw new ApiError(400, 'unknown_entities', `Index ${bad} is outside this factor set (0–${factorSet.rows - 1})`);
  return sortedUnique(indices);
}

async function membersOfProposal(db: DbOrTx, factorSet: FactorSet, clusteringId: string, label: number): Promise<Uint32Array> {
  const row = await db
    .selectFrom('clusterings')
    .select(['factor_set_id', 'status', 'labels', 'k'])
    .where('id', '=', clusteringId)
    .executeTakeFirst();
  if (!row || row.factor_set_id !== factorSet.id) throw new ApiError(400, 'unknown_clustering', 'That cluster proposal does not belong to this factor set');
  if (row.status !== 'done' || !row.labels) throw new ApiError(409, 'clustering_not_ready', 'That cluster proposal has not finished');
  const labels = new Int32Array(row.labels.buffer, row.labels.byteOffset, row.labels.byteLength >>> 2).slice();
  const members: number[] = [];
  for (let i = 0; i < labels.length; i += 1) if (labels[i] === label) members.push(i);
  if (members.length === 0) throw new ApiError(400, 'empty_cluster', `Cluster ${label} of that proposal has no members`);
  return Uint32Array.from(members);
}

async function sampleIds(db: DbOrTx, factorSetId: string, indices: Uint32Array): Promise<string[]> {
  if (indices.length === 0) return [];
  const first = Array.from(indices.subarray(0, SAMPLE));
  const rows = await db.selectFrom('factor_set_entities').select(['idx', 'entity_id']).where('factor_set_id', '=', factorSetId).where('idx', 'in', first).execute();
  const byIdx = new Map(rows.map((r) => [r.idx, r.entity_id]));
  return first.map((i) => byIdx.get(i) ?? String(i));
}

function nameTaken(error: unknown): boolean {
  return isUniqueViolation(error, 'annotations_name_idx');
}
const NAME_TAKEN = () => conflict('annotation_name_taken', 'Another annotation of this factor set already has that name');

async function answer(db: DbOrTx, annotation: Annotation, members: Uint32Array, form: MembersForm, ids?: string[]): Promise<AnnotationAnswer> {
  if (form === 'none') return annotation;
  if (form === 'indices') return { ...annotation, indices: Array.from(members) };
  const all = ids ?? (await entityIds(db, annotation.factorSetId));
  return { ...annotation, entities: Array.from(members, (i) => all[i] ?? String(i)) };
}

export async function listAnnotationsFor(db: Kysely<Database>, actor: User, factorSetId: string, form: MembersForm): Promise<AnnotationAnswer[]> {
  await requireFactorSetAccess(db, actor.id, factorSetId, 'workspace.view');
  const items = await listAnnotations(db, factorSetId);
  const ids = form === 'ids' && items.length > 0 ? await entityIds(db, factorSetId) : undefined;
  return Promise.all(items.map(({ annotation, members }) => answer(db, annotation, members, form, ids)));
}

export async function getAnnotationFor(db: Kysely<Database>, actor: User, annotationId: string, form: MembersForm): Promise<AnnotationAnswer> {
  await requireAnnotationAccess(db, actor, annotationId, 'workspace.view');
  const found = await findAnnotation(db, annotationId);
  if (!found) throw notFound(NOT_FOUND);
  return answer(db, found.annotation, found.members, form);
}

export async function createAnnotationAs(db: Kysely<Database>, actor: User, factorSetId: string, input: CreateAnnotationInput): Promise<AnnotationAnswer> {
  const { factorSet } = await requireFactorSetAccess(db, actor.id, factorSetId, 'annotations.edit');
  const members = input.entities
    ? await indicesOfEntities(db, factorSet.id, input.entities)
    : input.indices
      ? checkIndices(factorSet, input.indices)
      : input.clusterProposal
        ? await membersOfProposal(db, factorSet, input.clusterProposal.clusteringId, input.clusterProposal.label)
        : new Uint32Array(0);
  try {
    const id = await db.transaction().execute(async (tx) => {
      const row = await tx
        .insertInto('annotations')
        .values({
          factor_set_id: factorSet.id,
          name: input.name,
          color: input.color,
          description: input.description,
          members: membersToBytes(members),
          member_count: members.length,
          source_clustering_id: input.clusterProposal?.clusteringId ?? null,
          created_by: actor.id,
          updated_by: actor.id,
        })
        .returning('id')
        .executeTakeFirstOrThrow();
      const changes: ChangeSummary = {
        fields: { name: { from: null, to: input.name }, color: { from: null, to: input.color }, description: { from: null, to: input.description } },
        added: members.length,
        addedSample: await sampleIds(tx, factorSet.id, members),
        ...(input.clusterProposal ? { fromClusterProposal: input.clusterProposal } : {}),
      };
      await recordChange(tx, { factorSetId: factorSet.id, annotationId: row.id, version: 1, action: 'created', changes, actorId: actor.id });
      return row.id;
    });
    return getAnnotationFor(db, actor, id, 'ids');
  } catch (error) {
    if (nameTaken(error)) throw NAME_TAKEN();
    throw error;
  }
}

function staleVersion(current: number, sent: number): ApiError {
  return new ApiError(409, 'stale_version', `Someone changed this annotation since you opened it (you edited version ${sent}, it is now at version ${current}); reload it and make your change again`, {
    currentVersion: current,
  });
}

/**
 * Applies an edit only if the annotation is still at the version the editor saw: the row lock
 * (`for update`) orders concurrent edits, and the later one finds the version moved and is refused.
 */
export async function updateAnnotationAs(db: Kysely<Database>, actor: User, annotationId: string, input: UpdateAnnotationInput): Promise<AnnotationAnswer> {
  const { factorSet } = await requireAnnotationAccess(db, actor, annotationId, 'annotations.edit');
  const resolve = async (ids?: string[], indices?: number[]) =>
    ids ? indicesOfEntities(db, factorSet.id, ids) : indices ? checkIndices(factorSet, indices) : undefined;
  const replace = await resolve(input.entities, input.indices);
  const add = input.add ? unionSorted((await resolve(input.add.entities)) ?? new Uint32Array(0), (await resolve(undefined, input.add.indices)) ?? new Uint32Array(0)) : undefined;
  const remove = input.remove
    ? unionSorted((await resolve(input.remove.entities)) ?? new Uint32Array(0), (await resolve(undefined, input.remove.indices)) ?? new Uint32Array(0))
    : undefined;
  try {
    await db.transaction().execute(async (tx) => {
      const current = await tx.selectFrom('annotations').selectAll().where('id', '=', annotationId).forUpdate().executeTakeFirst();
      if (!current) throw notFound(NOT_FOUND);
      if (current.version !== input.version) throw staleVersion(current.version, input.version);
      const found = await findAnnotation(tx, annotationId);
      if (!found) throw notFound(NOT_FOUND);
      let members = replace ?? found.members;
      if (add) members = unionSorted(members, add);
      if (remove) members = differenceSorted(members, remove);
      const { added, removed } = membershipDelta(found.members, members);
      const fields: NonNullable<ChangeSummary['fields']> = {};
      for (const key of ['name', 'color', 'description'] as const) {
        const next = input[key];
        if (next !== undefined && next !== current[key]) fields[key] = { from: current[key], to: next };
      }
      const version = current.version + 1;
      await tx
        .updateTable('annotations')
        .set({
          name: input.name ?? current.name,
          color: input.color ?? current.color,
          description: input.description ?? current.description,
          members: membersToBytes(members),
          member_count: members.length,
          version,
          updated_by: actor.id,
          updated_at: new Date(),
        })
        .where('id', '=', annotationId)
        .execute();
      const changes: ChangeSummary = {
        ...(Object.keys(fields).length > 0 ? { fields } : {}),
        added: added.length,
        removed: removed.length,
        addedSample: await sampleIds(tx, factorSet.id, added),
        removedSample: await sampleIds(tx, factorSet.id, removed),
      };
      await recordChange(tx, { factorSetId: factorSet.id, annotationId, version, action: 'updated', changes, actorId: actor.id });
    });
  } catch (error) {
    if (nameTaken(error)) throw NAME_TAKEN();
    throw error;
  }
  return getAnnotationFor(db, actor, annotationId, 'ids');
}

/** Deletes an annotation; with `version`, only if nobody changed it since. The history stays. */
export async function deleteAnnotationAs(db: Kysely<Database>, actor: User, annotationId: string, version?: number): Promise<void> {
  const { factorSet } = await requireAnnotationAccess(db, actor, annotationId, 'annotations.edit');
  await db.transaction().execute(async (tx) => {
    const current = await tx.selectFrom('annotations').select(['version', 'name', 'member_count']).where('id', '=', annotationId).forUpdate().executeTakeFirst();
    if (!current) throw notFound(NOT_FOUND);
    if (version !== undefined && current.version !== version) throw staleVersion(current.version, version);
    await tx.deleteFrom('annotations').where('id', '=', annotationId).execute();
    await recordChange(tx, {
      factorSetId: factorSet.id,
      annotationId,
      version: current.version + 1,
      action: 'deleted',
      changes: { fields: { name: { from: current.name, to: null } }, removed: current.member_count },
      actorId: actor.id,
    });
  });
}

export async function annotationHistoryFor(db: Kysely<Database>, actor: User, annotationId: string): Promise<AnnotationChange[]> {
  await requireAnnotationAccess(db, actor, annotationId, 'workspace.view');
  return listAnnotationChanges(db, annotationId);
}
