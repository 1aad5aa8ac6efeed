import { sql } from 'kysely';
import type { AnnotationAction, AnnotationChangeRow, AnnotationRow } from '@/db/types';
import type { DbOrTx } from '@/lib/users/users';
import { membersFromBytes } from './members';

export interface PersonRef {
  id: string;
  name: string;
}

/** An annotation without its members (those are fetched in the form each reader needs). */
export interface Annotation {
  id: string;
  factorSetId: string;
  name: string;
  color: string;
  description: string;
  version: number;
  memberCount: number;
  sourceClusteringId: string | null;
  createdBy: PersonRef | null;
  createdAt: Date;
  updatedBy: PersonRef | null;
  updatedAt: Date;
}

export interface AnnotationChange {
  version: number;
  action: AnnotationAction;
  changes: ChangeSummary;
  actor: PersonRef | null;
  at: Date;
}

/** What one change did: the fields it changed (before → after) and the members it added or removed. */
export interface ChangeSummary {
  fields?: Partial<Record<'name' | 'color' | 'description', { from: string | null; to: string | null }>>;
  added?: number;
  removed?: number;
  /** The first few entity ids added and removed, so the history reads as more than counts. */
  addedSample?: string[];
  removedSample?: string[];
  fromClusterProposal?: { clusteringId: string; label: number };
}

type AnnotationRowWithPeople = AnnotationRow & {
  created_by_name: string | null;
  created_by_email: string | null;
  updated_by_name: string | null;
  updated_by_email: string | null;
};

function person(id: string | null, name: string | null, email: string | null): PersonRef | null {
  return id ? { id, name: name ?? email ?? 'a former member' } : null;
}

export function toAnnotation(row: AnnotationRowWithPeople): Annotation {
  return {
    id: row.id,
    factorSetId: row.factor_set_id,
    name: row.name,
    color: row.color,
    description: row.description,
    version: row.version,
    memberCount: row.member_count,
    sourceClusteringId: row.source_clustering_id,
    createdBy: person(row.created_by, row.created_by_name, row.created_by_email),
    createdAt: row.created_at,
    updatedBy: person(row.updated_by, row.updated_by_name, row.updated_by_email),
    updatedAt: row.updated_at,
  };
}

function withPeople(db: DbOrTx) {
  return db
    .selectFrom('annotations as a')
    .leftJoin('users as c', 'c.id', 'a.created_by')
    .leftJoin('users as u', 'u.id', 'a.updated_by')
    .selectAll('a')
    .select(['c.name as created_by_name', 'c.email as created_by_email', 'u.name as updated_by_name', 'u.email as updated_by_email']);
}

export async function findAnnotation(db: DbOrTx, id: string): Promise<{ annotation: Annotation; members: Uint32Array } | undefined> {
  const row = await withPeople(db).where('a.id', '=', id).executeTakeFirst();
  return row ? { annotation: toAnnotation(row), members: membersFromBytes(row.members) } : undefined;
}

export async function listAnnotations(db: DbOrTx, factorSetId: string): Promise<{ annotation: Annotation; members: Uint32Array }[]> {
  const rows = await withPeople(db).where('a.factor_set_id', '=', factorSetId).orderBy('a.created_at').orderBy('a.id').execute();
  return rows.map((row) => ({ annotation: toAnnotation(row), members: membersFromBytes(row.members) }));
}

/**
 * A cheap fingerprint of a factor set's annotations (ids and versions), the ETag an open map polls
 * with: it changes on every create, edit and delete, and costs no member bytes.
 */
export async function annotationsFingerprint(db: DbOrTx, factorSetId: string): Promise<string> {
  const row = await db
    .selectFrom('annotations')
    .select(sql<string>`md5(coalesce(string_agg(id::text || ':' || version, ',' order by id), ''))`.as('fingerprint'))
    .where('factor_set_id', '=', factorSetId)
    .executeTakeFirstOrThrow();
  return row.fingerprint;
}

type ChangeRowWithPeople = AnnotationChangeRow & { actor_name: string | null; actor_email: string | null };

function toChange(row: ChangeRowWithPeople): AnnotationChange {
  return {
    version: row.version,
    action: row.action,
    changes: row.changes as ChangeSummary,
    actor: person(row.actor_id, row.actor_name, row.actor_email),
    at: row.created_at,
  };
}

export async function listAnnotationChanges(db: DbOrTx, annotationId: string): Promise<AnnotationChange[]> {
  const rows = await db
    .selectFrom('annotation_changes as h')
    .leftJoin('users as u', 'u.id', 'h.actor_id')
    .selectAll('h')
    .select(['u.name as actor_name', 'u.email as actor_email'])
    .where('h.annotation_id', '=', annotationId)
    .orderBy('h.id', 'desc')
    .execute();
  return rows.map(toChange);
}

export async function recordChange(
  db: DbOrTx,
  entry: { factorSetId: string; annotationId: string; version: number; action: AnnotationAction; changes: ChangeSummary; actorId: string },
): Promise<void> {
  await db
    .insertInto('annotation_changes')
    .values({
      factor_set_id: entry.factorSetId,
      annotation_id: entry.annotationId,
      version: entry.version,
      action: entry.action,
      changes: JSON.stringify(entry.changes),
      actor_id: entry.actorId,
    })
    .execute();
}

/** The factor set an annotation belongs (or belonged, once deleted) to: history stays readable. */
export async function factorSetOfAnnotation(db: DbOrTx, annotationId: string): Promise<string | undefined> {
  const live = await db.selectFrom('annotations').select('factor_set_id').where('id', '=', annotationId).executeTakeFirst();
  if (live) return live.factor_set_id;
  const past = await db.selectFrom('annotation_changes').select('factor_set_id').where('annotation_id', '=', annotationId).limit(1).executeTakeFirst();
  return past?.factor_set_id;
}
