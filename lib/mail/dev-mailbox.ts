import { promises as fs } from 'node:fs';
import path from 'node:path';
import { z } from 'zod';

/** One message as the local SMTP sink (scripts/mail-sink.ts) stores it: a JSON file per message. */
export const storedMailSchema = z.object({
  id: z.string(),
  receivedAt: z.string(),
  from: z.string(),
  to: z.array(z.string()),
  subject: z.string(),
  text: z.string(),
  html: z.string(),
});
export type StoredMail = z.infer<typeof storedMailSchema>;

/** Newest first. A file that does not parse is reported and skipped, not fatal to the list. */
export async function readMailbox(dir: string): Promise<StoredMail[]> {
  let names: string[];
  try {
    names = (await fs.readdir(dir)).filter((n) => n.endsWith('.json'));
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code === 'ENOENT') return [];
    throw error;
  }
  const messages: StoredMail[] = [];
  for (const name of names) {
    try {
      messages.push(storedMailSchema.parse(JSON.parse(await fs.readFile(path.join(dir, name), 'utf8'))));
    } catch (error) {
      console.error(`mailbox: skipping unreadable message ${name}`, error);
    }
  }
  return messages.sort((a, b) => b.receivedAt.localeCompare(a.receivedAt) || b.id.localeCompare(a.id));
}
