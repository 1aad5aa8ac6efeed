import type { Metadata } from 'next';
import Link from 'next/link';

export const metadata: Metadata = { title: 'Check your e-mail' };

export default function CheckEmailPage() {
  return (
    <div className="border border-rule bg-paper-raised p-6">
      <h2 className="mb-3 text-xl font-semibold">Check your e-mail</h2>
      <p className="text-ink-muted">
        If an account uses that address, a sign-in link is on its way. It works once and expires in 30 minutes.
      </p>
      <p className="mt-5 text-sm">
        <Link className="text-accent underline-offset-2 hover:underline" href="/sign-in">
          Back to sign-in
        </Link>
      </p>
    </div>
  );
}
