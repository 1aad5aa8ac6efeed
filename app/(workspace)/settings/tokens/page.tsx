import type { Metadata } from 'next';
import { db } from '@/db';
import { requireUser } from '@/lib/auth/actor';
import { listAccessTokens } from '@/lib/tokens/access-tokens';
import { TokensPanel } from './tokens-panel';

export const metadata: Metadata = { title: 'Access tokens' };

export default async function TokensPage() {
  const user = await requireUser('/settings/tokens');
  const tokens = await listAccessTokens(db, user.id);
  return (
    <div className="flex max-w-3xl flex-col gap-6">
      <div>
        <h1 className="text-2xl font-semibold tracking-tight">Access tokens</h1>
        <p className="mt-1 text-ink-muted">
          Tokens let scripts (R, Python, curl) use the API as you, with your permissions in each workspace. Send one as{' '}
          <code className="bg-paper-sunk px-1">Authorization: Bearer &lt;token&gt;</code>. Revoke any you no longer use.
        </p>
      </div>
      <TokensPanel
        tokens={tokens.map((t) => ({
          id: t.id,
          name: t.name,
          prefix: t.prefix,
          createdAt: t.createdAt.toISOString(),
          lastUsedAt: t.lastUsedAt?.toISOString() ?? null,
          revokedAt: t.revokedAt?.toISOString() ?? null,
        }))}
      />
    </div>
  );
}
