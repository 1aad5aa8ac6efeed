import 'server-only';
import type { Kysely } from 'kysely';
import type { Database } from '@/db/types';
import { procrustesDisparity } from '@/lib/align';
import { ApiError } from '@/lib/api/errors';
import type { User } from '@/lib/users/users';
import { requireFactorSetAccess } from './access';
import { readMatrix } from './blocks';
import { entityIds } from './factor-sets';

export interface AlignmentResult {
  factorSetId: string;
  targetId: string;
  matched: number;
  onlyInSource: number;
  onlyInTarget: number;
  /** scipy.spatial.procrustes disparity: 0 for identical up to rotation/reflection/scale/shift; at most 1. */
  disparity: number;
  /** K×K, rows of the rotation that takes this factor set's standardised values onto the target's. */
  rotation: number[][];
}

/**
 * "Align to another factor set": orthogonal Procrustes of this factor set onto another, matched by
 * entity id, reporting the disparity so that two fits of one model can be compared.
 */
export async function alignToAnother(db: Kysely<Database>, actor: User, factorSetId: string, targetId: string): Promise<AlignmentResult> {
  const { factorSet: source } = await requireFactorSetAccess(db, actor.id, factorSetId, 'projections.run');
  const { factorSet: target } = await requireFactorSetAccess(db, actor.id, targetId, 'workspace.view');
  if (source.id === target.id) throw new ApiError(400, 'same_factor_set', 'Choose another factor set to align to');
  if (source.dims !== target.dims) {
    throw new ApiError(400, 'dims_mismatch', `The factor sets have ${source.dims} and ${target.dims} dimensions; Procrustes needs the same number`);
  }
  const k = source.dims;
  const [sourceIds, targetIds, sourceValues, targetValues] = await Promise.all([
    entityIds(db, source.id),
    entityIds(db, target.id),
    readMatrix(db, source.id, 'values', source.rows, k),
    readMatrix(db, target.id, 'values', target.rows, k),
  ]);
  const targetIndex = new Map(targetIds.map((id, i) => [id, i]));
  const pairs: [number, number][] = [];
  sourceIds.forEach((id, i) => {
    const j = targetIndex.get(id);
    if (j !== undefined) pairs.push([i, j]);
  });
  if (pairs.length <= k) {
    throw new ApiError(400, 'too_few_matches', `Only ${pairs.length} entity ids match; aligning ${k} dimensions needs more than ${k}`);
  }
  const a = new Float64Array(pairs.length * k);
  const b = new Float64Array(pairs.length * k);
  pairs.forEach(([i, j], row) => {
    for (let c = 0; c < k; c += 1) {
      a[row * k + c] = targetValues[j * k + c] ?? 0;
      b[row * k + c] = sourceValues[i * k + c] ?? 0;
    }
  });
  const result = procrustesDisparity(a, b, pairs.length, k);
  const rotation = Array.from({ length: k }, (_, r) => Array.from(result.rotation.subarray(r * k, r * k + k)));
  await db
    .insertInto('factor_set_alignments')
    .values({
      factor_set_id: source.id,
      target_id: target.id,
      matched: pairs.length,
      disparity: result.disparity,
      rotation: JSON.stringify(rotation),
      created_by: actor.id,
    })
    .execute();
  return {
    factorSetId: source.id,
    targetId: target.id,
    matched: pairs.length,
    onlyInSource: sourceIds.length - pairs.length,
    onlyInTarget: targetIds.length - pairs.length,
    disparity: result.disparity,
    rotation,
  };
}
