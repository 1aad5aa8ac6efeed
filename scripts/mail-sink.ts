/**
 * The local SMTP sink that stands in for a mail provider: accepts every message on loopback and
 * stores it as JSON in DEV_MAIL_DIR, where /dev/mail and the tests read it.
 */
import { randomUUID } from 'node:crypto';
import { promises as fs } from 'node:fs';
import path from 'node:path';
import { simpleParser, type AddressObject } from 'mailparser';
import { SMTPServer } from 'smtp-server';
import type { StoredMail } from '../lib/mail/dev-mailbox';

const port = Number(process.env.SMTP_PORT ?? 2525);
const dir = process.env.DEV_MAIL_DIR;
if (!dir) {
  console.error('mail-sink: DEV_MAIL_DIR is not set');
  process.exit(1);
}
await fs.mkdir(dir, { recursive: true });

const addresses = (field: AddressObject | AddressObject[] | undefined): string[] =>
  (Array.isArray(field) ? field : field ? [field] : []).flatMap((a) => a.value.map((v) => v.address ?? '')).filter(Boolean);

const server = new SMTPServer({
  authOptional: true,
  disabledCommands: ['STARTTLS', 'AUTH'],
  banner: 'Asterism local mail sink',
  size: 10 * 1024 * 1024,
  onData(stream, _session, callback) {
    simpleParser(stream)
      .then(async (parsed) => {
        const receivedAt = new Date().toISOString();
        const mail: StoredMail = {
          id: randomUUID(),
          receivedAt,
          from: parsed.from?.text ?? '',
          to: addresses(parsed.to),
          subject: parsed.subject ?? '',
          text: parsed.text ?? '',
          html: typeof parsed.html === 'string' ? parsed.html : '',
        };
        // Write then rename, so readers never see half a message.
        const file = path.join(dir, `${receivedAt.replace(/[:.]/g, '-')}-${mail.id}.json`);
        await fs.writeFile(`${file}.tmp`, JSON.stringify(mail, null, 2));
        await fs.rename(`${file}.tmp`, file);
        callback();
      })
      .catch((error: unknown) => {
        console.error('mail-sink: could not store a message', error);
        callback(error instanceof Error ? error : new Error(String(error)));
      });
  },
});

server.on('error', (error) => console.error('mail-sink:', error));
server.listen(port, '127.0.0.1', () => console.log(`mail-sink: listening on 127.0.0.1:${port}, storing in ${dir}`));

const stop = () => server.close(() => process.exit(0));
process.on('SIGINT', stop);
process.on('SIGTERM', stop);
