import { createDb } from '../db/connection';
import { migrateToLatest } from '../db/migrate';

const url = process.env.DATABASE_URL;
if (!url) {
  console.error('migrate: DATABASE_URL is not set');
  process.exit(1);
}
const db = createDb(url, 2);
try {
  const applied = await migrateToLatest(db);
  console.log(applied.length ? `migrate: applied ${applied.join(', ')}` : 'migrate: database is up to date');
} catch (error) {
  console.error('migrate:', error);
  process.exitCode = 1;
} finally {
  await db.destroy();
}
