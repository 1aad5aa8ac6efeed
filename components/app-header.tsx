import Link from 'next/link';
import { signOutAction } from '@/app/(auth)/_private/actions';
import type { User } from '@/lib/users/users';
import { Brand } from './brand';

export function AppHeader({ user }: { user: User }) {
  return (
    <header className="border-b border-rule bg-paper">
      <div className="mx-auto flex max-w-6xl flex-wrap items-center gap-x-6 gap-y-2 px-6 py-3">
        <Brand href="/workspaces" />
        <nav aria-label="Main" className="flex gap-4 text-sm">
          <Link className="text-ink-muted hover:text-ink" href="/workspaces">
            Workspaces
          </Link>
          <Link className="text-ink-muted hover:text-ink" href="/settings/tokens">
            Access tokens
          </Link>
        </nav>
        <div className="ml-auto flex items-center gap-3 text-sm">
          <span className="text-ink-muted" data-testid="signed-in-as">
            {user.name ?? user.email}
          </span>
          <form action={signOutAction}>
            <button type="submit" className="text-accent underline-offset-2 hover:underline">
              Sign out
            </button>
          </form>
        </div>
      </div>
    </header>
  );
}
