import type { Metadata } from 'next';
import Link from 'next/link';
import { db } from '@/db';
import { requireUser } from '@/lib/auth/actor';
import { listWorkspacesForUser } from '@/lib/workspaces/workspaces';
import { CreateWorkspaceForm } from '../_private/create-workspace-form';

export const metadata: Metadata = { title: 'Workspaces' };

export default async function WorkspacesPage() {
  const user = await requireUser('/workspaces');
  const workspaces = await listWorkspacesForUser(db, user.id);
  return (
    <div className="flex flex-col gap-8">
      <div>
        <h1 className="text-2xl font-semibold tracking-tight">Workspaces</h1>
        <p className="mt-1 text-ink-muted">Each workspace keeps its own factor sets, projections, annotations and threads.</p>
      </div>
      {workspaces.length === 0 ? (
        <p className="border border-dashed border-rule bg-paper-raised p-6 text-ink-muted">
          You do not belong to any workspace yet. Create one below, or ask an owner to invite you.
        </p>
      ) : (
        <ul className="grid gap-3 sm:grid-cols-2 lg:grid-cols-3" aria-label="Your workspaces">
          {workspaces.map((w) => (
            <li key={w.id}>
              <Link
                href={`/workspaces/${w.id}`}
                className="flex h-full flex-col gap-2 border border-rule bg-paper-raised p-4 hover:border-accent"
              >
                <span className="font-semibold">{w.name}</span>
                <span className="flex gap-3 text-sm text-ink-muted">
                  <span className="small-caps">{w.role}</span>
                  <span className="tabular">
                    {w.memberCount} {w.memberCount === 1 ? 'member' : 'members'}
                  </span>
                </span>
              </Link>
            </li>
          ))}
        </ul>
      )}
      <section className="border-t border-rule pt-6">
        <h2 className="mb-3 text-lg font-semibold">Start a workspace</h2>
        <CreateWorkspaceForm />
      </section>
    </div>
  );
}
