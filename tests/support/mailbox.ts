import { readMailbox, type StoredMail } from '@/lib/mail/dev-mailbox';
import { testConfig } from './config';

/** Waits for the local SMTP sink to store a message to `to` (optionally matching `subject`). */
export async function waitForMail(to: string, subject?: RegExp, timeoutMs = 10_000): Promise<StoredMail> {
  const deadline = Date.now() + timeoutMs;
  while (Date.now() < deadline) {
    const found = (await readMailbox(testConfig().mailDir)).find(
      (m) => m.to.includes(to) && (!subject || subject.test(m.subject)),
    );
    if (found) return found;
    await new Promise((r) => setTimeout(r, 150));
  }
  throw new Error(`no mail to ${to}${subject ? ` matching ${subject}` : ''} within ${timeoutMs} ms`);
}

export async function mailCount(to: string): Promise<number> {
  return (await readMailbox(testConfig().mailDir)).filter((m) => m.to.includes(to)).length;
}

/** The first link in a message's text that starts with `prefix`. */
export function linkIn(mail: StoredMail, prefix: string): string {
  const link = mail.text.split(/\s+/).find((word) => word.startsWith(prefix));
  if (!link) throw new Error(`no link starting ${prefix} in "${mail.subject}"`);
  return link;
}
