import type { DbOrTx } from '@/lib/users/users';
import { type ProjectionRequest, projectionRequestSchema } from '@/lib/validation/projections';

/** The settings of the last projection someone in the workspace asked for on this factor set. */
export async function rememberProjectionSettings(db: DbOrTx, factorSetId: string, userId: string, request: ProjectionRequest): Promise<void> {
  const value = JSON.stringify({ method: request.method, params: request.params ?? {}, seed: request.seed });
  await db
    .insertInto('factor_set_preferences')
    .values({ factor_set_id: factorSetId, last_projection: value, updated_by: userId })
    .onConflict((oc) => oc.column('factor_set_id').doUpdateSet({ last_projection: value, updated_by: userId, updated_at: new Date() }))
    .execute();
}

/** Re-validated on the way out: a stored value from an older schema is ignored rather than trusted. */
export async function lastProjectionSettings(db: DbOrTx, factorSetId: string): Promise<ProjectionRequest | null> {
  const row = await db.selectFrom('factor_set_preferences').select('last_projection').where('factor_set_id', '=', factorSetId).executeTakeFirst();
  if (!row) return null;
  const parsed = projectionRequestSchema.safeParse(row.last_projection);
  return parsed.success ? parsed.data : null;
}
