import type { Metadata } from 'next';
import Link from 'next/link';
import { buttonClasses } from '@/components/ui/button';
import { db } from '@/db';
import { listFits } from '@/lib/fits/fits';
import { can } from '@/lib/permissions';
import { workspaceForPage } from '@/lib/workspaces/page-access';

export const metadata: Metadata = { title: 'Fits' };

const when = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short' });

export default async function FitsPage({ params }: { params: Promise<{ workspaceId: string }> }) {
  const { workspaceId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  const fits = await listFits(db, workspace.id);
  const mayFit = can(role, 'factor-sets.fit');
  return (
    <section aria-labelledby="fits-heading" className="flex flex-col gap-3">
      <div className="flex items-center justify-between gap-3">
        <h2 id="fits-heading" className="text-lg font-semibold">
          Fits
        </h2>
        {mayFit && (
          <Link href={`/workspaces/${workspace.id}/fits/new`} className={buttonClasses('primary')}>
            Fit a factorization machine
          </Link>
        )}
      </div>
      <p className="max-w-prose text-sm text-ink-muted">
        A fit turns a long table of observations (one row per pair of entities, with an outcome) into two factor sets — row-entity and column-entity factors — judged out of sample against a
        main-effects-only model.
      </p>
      {fits.length === 0 ? (
        <p className="border border-dashed border-rule bg-paper-raised p-6 text-sm text-ink-muted">
          No fits yet.{mayFit ? '' : ' An analyst or owner of this workspace fits them; they will appear here.'}
        </p>
      ) : (
        <div className="overflow-x-auto border border-rule bg-paper-raised">
          <table className="tabular w-full text-left text-sm" data-testid="fits-table">
            <thead className="border-b border-rule text-xs text-ink-muted">
              <tr>
                <th scope="col" className="px-4 py-2 font-medium">Name</th>
                <th scope="col" className="px-4 py-2 font-medium">Likelihood</th>
                <th scope="col" className="px-4 py-2 text-right font-medium">Rank</th>
                <th scope="col" className="px-4 py-2 text-right font-medium">Observations</th>
                <th scope="col" className="px-4 py-2 font-medium">Status</th>
                <th scope="col" className="px-4 py-2 font-medium">Submitted</th>
              </tr>
            </thead>
            <tbody>
              {fits.map((f) => (
                <tr key={f.id} className="border-b border-rule last:border-0">
                  <td className="px-4 py-2">
                    <Link className="text-accent hover:underline" href={`/workspaces/${workspace.id}/fits/${f.id}`}>
                      {f.name}
                    </Link>
                  </td>
                  <td className="px-4 py-2">{f.settings.likelihood}</td>
                  <td className="px-4 py-2 text-right">{f.settings.rank}</td>
                  <td className="px-4 py-2 text-right">{f.observations.toLocaleString('en-GB')}</td>
                  <td className="px-4 py-2">{f.status === 'running' ? `running (${Math.round(f.progress * 100)}%)` : f.status}</td>
                  <td className="px-4 py-2 text-ink-muted">{when.format(f.createdAt)}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}
