import type { Metadata } from 'next';
import { notFound } from 'next/navigation';
import { Brand } from '@/components/brand';
import { readMailbox } from '@/lib/mail/dev-mailbox';
import { serverEnv } from '@/lib/env';

export const metadata: Metadata = { title: 'Local mail' };
export const dynamic = 'force-dynamic';

const when = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'medium' });

/** Split text into runs so that links in a message can be followed from this page. */
function linkify(text: string): React.ReactNode[] {
  return text.split(/(https?:\/\/[^\s]+)/g).map((part, i) =>
    /^https?:\/\//.test(part) ? (
      <a key={i} href={part} className="break-all text-accent underline">
        {part}
      </a>
    ) : (
      part
    ),
  );
}

/** Exists only where the local SMTP sink runs (DEV_MAIL_DIR set by npm start and npm test). */
export default async function DevMailPage() {
  const dir = serverEnv().DEV_MAIL_DIR;
  if (!dir) notFound();
  const messages = await readMailbox(dir);
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-rule px-6 py-4">
        <Brand />
      </header>
      <main id="main" className="mx-auto w-full max-w-3xl px-6 py-8">
        <h1 className="text-2xl font-semibold tracking-tight">Local mail</h1>
        <p className="mt-1 text-sm text-ink-muted">
          Every message the app sent to the local SMTP sink, newest first. Nothing here left this machine.
        </p>
        {messages.length === 0 ? (
          <p className="mt-6 text-ink-muted">No messages yet.</p>
        ) : (
          <ol className="mt-6 flex flex-col gap-4">
            {messages.map((m) => (
              <li key={m.id} className="border border-rule bg-paper-raised p-4">
                <p className="font-semibold">{m.subject}</p>
                <p className="tabular text-xs text-ink-muted">
                  to {m.to.join(', ')} · {when.format(new Date(m.receivedAt))}
                </p>
                <pre className="mt-3 whitespace-pre-wrap font-sans text-sm">{linkify(m.text)}</pre>
              </li>
            ))}
          </ol>
        )}
      </main>
    </div>
  );
}
