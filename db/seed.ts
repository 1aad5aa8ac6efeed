/**
 * Seeds the Larkspur Books demo (PRODUCT.md): one workspace, one account per role.
 * Idempotent; runs only when ASTERISM_DEMO_SEED=1, which `npm start` sets for the local demo.
 * Run with `tsx --conditions=react-server` so that server-only modules load outside Next.js.
 */
import type { Kysely } from 'kysely';
import { hashPassword } from '../lib/auth/secrets';
import { createDb } from './connection';
import { queueDemoProjections, seedDemoFactorSets } from './demo/seed-factor-sets';
import { submitDemoFit } from './demo/seed-fit';
import type { Database, RoleColumn } from './types';

export const DEMO_WORKSPACE_NAME = 'Larkspur Books';
export const DEMO_ACCOUNTS: { email: string; name: string; role: RoleColumn }[] = [
  { email: 'owner@demo.test', name: 'Maren Holt (owner)', role: 'owner' },
  { email: 'analyst@demo.test', name: 'Idris Pell (analyst)', role: 'analyst' },
  { email: 'expert@demo.test', name: 'Tove Larch (regional lead)', role: 'expert' },
  { email: 'presenter@demo.test', name: 'Cas Wren (presenter)', role: 'presenter' },
  { email: 'reviewer@demo.test', name: 'Noor Abbing (finance reviewer)', role: 'reviewer' },
  { email: 'viewer@demo.test', name: 'Ola Brisk (viewer)', role: 'viewer' },
];

export async function seedDemo(db: Kysely<Database>, password: string): Promise<{ workspaceId: string; ownerId: string }> {
  return db.transaction().execute(async (tx) => {
    const userIds = new Map<string, string>();
    for (const account of DEMO_ACCOUNTS) {
      const existing = await tx.selectFrom('users').select('id').where('email', '=', account.email).executeTakeFirst();
      if (existing) {
        userIds.set(account.email, existing.id);
        continue;
      }
      const row = await tx
        .insertInto('users')
        .values({
          email: account.email,
          name: account.name,
          password_hash: await hashPassword(password),
          email_verified_at: new Date(),
        })
        .returning('id')
        .executeTakeFirstOrThrow();
      userIds.set(account.email, row.id);
    }
    const ownerId = userIds.get('owner@demo.test');
    if (!ownerId) throw new Error('demo owner missing');
    let workspace = await tx
      .selectFrom('workspaces as w')
      .innerJoin('memberships as m', 'm.workspace_id', 'w.id')
      .select('w.id')
      .where('w.name', '=', DEMO_WORKSPACE_NAME)
      .where('m.user_id', '=', ownerId)
      .executeTakeFirst();
    if (!workspace) {
      workspace = await tx
        .insertInto('workspaces')
        .values({ name: DEMO_WORKSPACE_NAME, created_by: ownerId })
        .returning('id')
        .executeTakeFirstOrThrow();
    }
    const workspaceId = workspace.id;
    for (const account of DEMO_ACCOUNTS) {
      const userId = userIds.get(account.email);
      if (!userId) continue;
      await tx
        .insertInto('memberships')
        .values({ workspace_id: workspaceId, user_id: userId, role: account.role })
        .onConflict((oc) => oc.columns(['workspace_id', 'user_id']).doNothing())
        .execute();
    }
    return { workspaceId, ownerId };
  });
}

async function main(): Promise<void> {
  if (process.env.ASTERISM_DEMO_SEED !== '1') {
    console.log('seed: skipped (set ASTERISM_DEMO_SEED=1 to seed the local demo)');
    return;
  }
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set');
  const db = createDb(url, 2);
  try {
    const { workspaceId, ownerId } = await seedDemo(db, process.env.DEMO_PASSWORD || 'asterism-demo');
    const started = Date.now();
    const imported = await seedDemoFactorSets(db, workspaceId, ownerId);
    if (imported.length) console.log(`seed: imported ${imported.join('; ')} in ${((Date.now() - started) / 1000).toFixed(1)} s`);
    if (process.env.ASTERISM_DEMO_PROJECTIONS !== '0') {
      const queued = await queueDemoProjections(db, workspaceId, ownerId);
      if (queued) console.log(`seed: queued ${queued} demo projections (PCA and UMAP of each factor set) for the workers`);
    }
    // The demo fit is a job too (about a minute): off wherever the demo's jobs are (the tests).
    if ((process.env.ASTERISM_DEMO_FIT ?? process.env.ASTERISM_DEMO_PROJECTIONS) !== '0') {
      if (await submitDemoFit(db, workspaceId, ownerId)) console.log('seed: queued the demo fit (Larkspur monthly sales, Poisson with footfall exposure) for the workers');
    }
    console.log(`seed: demo workspace "${DEMO_WORKSPACE_NAME}" with ${DEMO_ACCOUNTS.length} accounts is ready`);
  } finally {
    await db.destroy();
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  main().catch((error: unknown) => {
    console.error('seed failed:', error);
    process.exitCode = 1;
  });
}
