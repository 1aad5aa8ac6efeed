import type { Metadata } from 'next';
import Link from 'next/link';
import { ForgotPasswordForm } from '../_private/account-forms';

export const metadata: Metadata = { title: 'Reset your password' };

export default function ForgotPasswordPage() {
  return (
    <div className="border border-rule bg-paper-raised p-6">
      <h2 className="mb-2 text-xl font-semibold">Reset your password</h2>
      <p className="mb-4 text-sm text-ink-muted">We will e-mail you a link to choose a new one.</p>
      <ForgotPasswordForm />
      <p className="mt-5 text-sm">
        <Link className="text-accent underline-offset-2 hover:underline" href="/sign-in">
          Back to sign-in
        </Link>
      </p>
    </div>
  );
}
