import { sql } from 'kysely';
import { db } from '@/db';
import { json } from '@/lib/api/route';

export const dynamic = 'force-dynamic';

export async function GET(): Promise<Response> {
  try {
    await sql`select 1`.execute(db);
    return json({ ok: true, db: true });
  } catch (error) {
    console.error('health check: database unreachable', error);
    return json({ ok: false, db: false }, 503);
  }
}
