import type { Metadata } from 'next';
import Link from 'next/link';
import { redirect } from 'next/navigation';
import { FormMessage } from '@/components/ui/field';
import { safeReturnPath } from '@/lib/api/action-result';
import { sessionUser } from '@/lib/auth/actor';
import { MagicLinkForm, PasswordSignInForm } from '../_private/sign-in-forms';

export const metadata: Metadata = { title: 'Sign in' };

const AUTH_ERRORS: Record<string, string> = {
  Verification: 'That sign-in link is invalid or has expired. Ask for a new one.',
  AccessDenied: 'That sign-in was refused.',
  Configuration: 'Sign-in is misconfigured on the server; the error has been logged.',
};

export default async function SignInPage({
  searchParams,
}: {
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const params = await searchParams;
  const returnTo = safeReturnPath(params.callbackUrl);
  if (await sessionUser()) redirect(returnTo);
  const error = typeof params.error === 'string' ? (AUTH_ERRORS[params.error] ?? 'Sign-in failed; please try again.') : null;
  const email = typeof params.email === 'string' ? params.email : undefined;
  return (
    <div className="border border-rule bg-paper-raised p-6">
      <h2 className="mb-5 text-xl font-semibold">Sign in</h2>
      <div className="flex flex-col gap-4">
        {params.reset === '1' && <FormMessage kind="success">Your password was changed. Sign in with the new one.</FormMessage>}
        {error && <FormMessage kind="error">{error}</FormMessage>}
        <PasswordSignInForm returnTo={returnTo} email={email} />
        <p className="text-sm">
          <Link className="text-accent underline-offset-2 hover:underline" href="/forgot-password">
            Forgot your password?
          </Link>
        </p>
        <div className="my-1 flex items-center gap-3 text-xs text-ink-faint" aria-hidden="true">
          <span className="h-px flex-1 bg-rule" /> or <span className="h-px flex-1 bg-rule" />
        </div>
        <MagicLinkForm returnTo={returnTo} />
        <p className="border-t border-rule pt-4 text-sm text-ink-muted">
          New here?{' '}
          <Link
            className="text-accent underline-offset-2 hover:underline"
            href={`/sign-up${params.callbackUrl ? `?callbackUrl=${encodeURIComponent(returnTo)}` : ''}`}
          >
            Create an account
          </Link>
        </p>
      </div>
    </div>
  );
}
