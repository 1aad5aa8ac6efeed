import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import type { Kysely } from 'kysely';
import { importLimits, parseImport, storeImport } from '../../lib/factor-sets/import-service';
import { describeLocalFile } from '../../lib/factor-sets/staging';
import { stopQueue } from '../../lib/jobs/queue';
import { requestProjection } from '../../lib/projections/service';
import { toUser } from '../../lib/users/users';
import type { ImportFields } from '../../lib/validation/factor-sets';
import type { Database } from '../types';
import { larkspurShopsCsv, SURVEY, surveyDraws } from './larkspur';
import { writeFloat32Npy } from './npy';

interface DemoFile {
  name: string;
  fileName: string;
  write: (dir: string) => Promise<{ file: string; labels?: string }>;
  fields: ImportFields;
}

const DEMO_FILES: DemoFile[] = [
  {
    name: 'Larkspur shop factors',
    fileName: 'larkspur-shops.csv',
    fields: { name: 'Larkspur shop factors', options: { idColumn: 'shop_id', labelColumn: 'label', metadataColumns: ['footfall_k'] } },
    async write(dir) {
      const file = path.join(dir, 'larkspur-shops.csv');
      await writeFile(file, larkspurShopsCsv());
      return { file };
    },
  },
  {
    name: `Survey embedding (${SURVEY.respondents} respondents, ${SURVEY.draws} draws)`,
    fileName: 'survey-draws.npy',
    fields: { name: `Survey embedding (${SURVEY.respondents} respondents, ${SURVEY.draws} draws)`, options: {} },
    async write(dir) {
      const { draws, labelsCsv } = surveyDraws();
      const file = path.join(dir, 'survey-draws.npy');
      const labels = path.join(dir, 'survey-respondents.csv');
      await writeFloat32Npy(file, draws, [SURVEY.draws, SURVEY.respondents, SURVEY.dims]);
      await writeFile(labels, labelsCsv);
      return { file, labels };
    },
  },
];

/** Imports the demo factor sets through the same parse → align → store path as an upload. Idempotent. */
export async function seedDemoFactorSets(db: Kysely<Database>, workspaceId: string, userId: string): Promise<string[]> {
  const created: string[] = [];
  for (const demo of DEMO_FILES) {
    const existing = await db
      .selectFrom('factor_sets')
      .select('id')
      .where('workspace_id', '=', workspaceId)
      .where('name', '=', demo.name)
      .executeTakeFirst();
    if (existing) continue;
    const dir = await mkdtemp(path.join(tmpdir(), 'asterism-demo-'));
    try {
      const written = await demo.write(dir);
      const source = {
        file: await describeLocalFile(written.file, demo.fileName),
        labels: written.labels ? await describeLocalFile(written.labels) : undefined,
      };
      const parsed = await parseImport(source, demo.fields, importLimits());
      await storeImport(db, { workspaceId, userId, source, fields: demo.fields, parsed });
      created.push(demo.name);
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  }
  return created;
}

/** A PCA and a UMAP projection of every demo factor set, through the same request path as the API. */
export async function queueDemoProjections(db: Kysely<Database>, workspaceId: string, ownerId: string): Promise<number> {
  const owner = await db.selectFrom('users').selectAll().where('id', '=', ownerId).executeTakeFirstOrThrow();
  const actor = toUser(owner);
  const sets = await db.selectFrom('factor_sets').select('id').where('workspace_id', '=', workspaceId).execute();
  let queued = 0;
  try {
    for (const set of sets) {
      for (const method of ['pca', 'umap'] as const) {
        const { existing } = await requestProjection(db, actor, set.id, { method, params: {}, seed: 42 });
        if (!existing) queued += 1;
      }
    }
  } finally {
    await stopQueue();
  }
  return queued;
}
