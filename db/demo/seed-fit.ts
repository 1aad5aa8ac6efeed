import { randomUUID } from 'node:crypto';
import { mkdir, writeFile } from 'node:fs/promises';
import path from 'node:path';
import type { Kysely } from 'kysely';
import { uploadRoot } from '../../lib/factor-sets/import-service';
import { describeLocalFile } from '../../lib/factor-sets/staging';
import type { FitSettings } from '../../lib/fit/settings';
import { submitFit } from '../../lib/fits/service';
import { stopQueue } from '../../lib/jobs/queue';
import { toUser } from '../../lib/users/users';
import type { Database } from '../types';
import { larkspurSalesCsv } from './larkspur';

export const DEMO_FIT_NAME = 'Larkspur monthly sales (Poisson, footfall exposure)';

/**
 * The analyst's fit in the demo (PRODUCT.md): shop × category monthly counts, Poisson with the
 * shop's footfall as exposure and the month as a categorical covariate (seasonal level), rank 4
 * with ARD so the fit page shows how many dimensions the data support, judged by 5-fold
 * cross-validation against the main-effects and intercept-only models.
 */
export const DEMO_FIT_SETTINGS: FitSettings = {
  rowColumn: 'shop_id',
  columnColumn: 'category',
  outcome: 'sales',
  offset: 'footfall_k',
  offsetScale: 'exposure',
  covariates: [{ column: 'month', type: 'categorical' }],
  likelihood: 'poisson',
  rank: 4,
  method: 'map',
  hierarchical: true,
  folds: 5,
  seed: 2026,
  priorScale: 1,
};

/**
 * Submits the demo fit through the same path as an upload (checks, fit row, job); the worker then
 * fits it, stores the two factor sets and queues a PCA projection of each. Idempotent: a workspace
 * that already has the demo fit (in any state) gets no second one.
 */
export async function submitDemoFit(db: Kysely<Database>, workspaceId: string, ownerId: string): Promise<boolean> {
  const existing = await db.selectFrom('fits').select('id').where('workspace_id', '=', workspaceId).where('name', '=', DEMO_FIT_NAME).executeTakeFirst();
  if (existing) return false;
  const analyst = await db.selectFrom('users').selectAll().where('email', '=', 'analyst@demo.test').executeTakeFirst();
  const actor = toUser(analyst ?? (await db.selectFrom('users').selectAll().where('id', '=', ownerId).executeTakeFirstOrThrow()));
  // Staged in the upload folder like an upload, so submitFit can move it to the fit's input folder.
  const dir = path.join(uploadRoot(), randomUUID());
  await mkdir(dir, { recursive: true, mode: 0o700 });
  const file = path.join(dir, 'file');
  await writeFile(file, larkspurSalesCsv());
  try {
    await submitFit(db, actor, workspaceId, { dir, file: await describeLocalFile(file, 'larkspur-monthly-sales.csv') }, { name: DEMO_FIT_NAME, settings: DEMO_FIT_SETTINGS });
  } finally {
    await stopQueue();
  }
  return true;
}
