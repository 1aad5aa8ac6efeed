import Link from 'next/link';
import { buttonClasses } from '@/components/ui/button';
import { db } from '@/db';
import { listFactorSets } from '@/lib/factor-sets/factor-sets';
import { can } from '@/lib/permissions';
import { workspaceForPage } from '@/lib/workspaces/page-access';

const when = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium' });

export default async function WorkspaceHomePage({ params }: { params: Promise<{ workspaceId: string }> }) {
  const { workspaceId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  const mayImport = can(role, 'factor-sets.import');
  const factorSets = await listFactorSets(db, workspace.id);
  const importLink = `/workspaces/${workspace.id}/import`;
  const fitLink = can(role, 'factor-sets.fit') ? `/workspaces/${workspace.id}/fits/new` : null;
  return (
    <div className="grid gap-6 lg:grid-cols-[1fr_320px]">
      {factorSets.length === 0 ? (
        <section aria-labelledby="factor-sets-heading" className="border border-dashed border-rule bg-paper-raised p-8">
          <h2 id="factor-sets-heading" className="text-lg font-semibold">
            No factor sets yet
          </h2>
          <p className="mt-2 max-w-prose text-ink-muted">
            Everything here starts from a factor set: a matrix of fitted latent factors with one row per entity (a
            shop, a respondent, a product) and one column per latent dimension, optionally with posterior draws.
          </p>
          {mayImport ? (
            <div className="mt-5 flex flex-wrap gap-3">
              <Link href={importLink} className={buttonClasses('primary')}>
                Import a factor set
              </Link>
              {fitLink && (
                <Link href={fitLink} className={buttonClasses('secondary')}>
                  Fit a factorization machine
                </Link>
              )}
            </div>
          ) : (
            <p className="mt-5 text-sm text-ink-muted">An analyst or owner of this workspace imports factor sets; they will appear here.</p>
          )}
        </section>
      ) : (
        <section aria-labelledby="factor-sets-heading" className="flex flex-col gap-3">
          <div className="flex items-center justify-between gap-3">
            <h2 id="factor-sets-heading" className="text-lg font-semibold">
              Factor sets
            </h2>
            <div className="flex flex-wrap gap-3">
              {fitLink && (
                <Link href={fitLink} className={buttonClasses('secondary')}>
                  Fit a factorization machine
                </Link>
              )}
              {mayImport && (
                <Link href={importLink} className={buttonClasses('primary')}>
                  Import a factor set
                </Link>
              )}
            </div>
          </div>
          <div className="overflow-x-auto border border-rule bg-paper-raised">
            <table className="tabular w-full text-left text-sm" data-testid="factor-sets-table">
              <thead className="border-b border-rule text-xs text-ink-muted">
                <tr>
                  <th scope="col" className="px-4 py-2 font-medium">Name</th>
                  <th scope="col" className="px-4 py-2 text-right font-medium">Entities</th>
                  <th scope="col" className="px-4 py-2 text-right font-medium">Dimensions</th>
                  <th scope="col" className="px-4 py-2 text-right font-medium">Draws</th>
                  <th scope="col" className="px-4 py-2 font-medium">Format</th>
                  <th scope="col" className="px-4 py-2 font-medium">Imported</th>
                </tr>
              </thead>
              <tbody>
                {factorSets.map((f) => (
                  <tr key={f.id} className="border-b border-rule last:border-0">
                    <td className="px-4 py-2">
                      <Link className="text-accent hover:underline" href={`/workspaces/${workspace.id}/factor-sets/${f.id}`}>
                        {f.name}
                      </Link>
                    </td>
                    <td className="px-4 py-2 text-right">{f.rows.toLocaleString('en-GB')}</td>
                    <td className="px-4 py-2 text-right">{f.dims}</td>
                    <td className="px-4 py-2 text-right">{f.draws || '—'}</td>
                    <td className="px-4 py-2">{f.format}</td>
                    <td className="px-4 py-2 text-ink-muted">{when.format(f.createdAt)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </section>
      )}
      <aside className="flex flex-col gap-3 border border-rule bg-paper-sunk p-5 text-sm" aria-label="Before you read a map">
        <h2 className="small-caps text-xs font-semibold text-ink-muted">Before you read a map</h2>
        <p>Factors are identified only up to rotation, reflection and scale: align fits or draws before comparing them.</p>
        <p>With UMAP and t-SNE, 2-D distances between far-apart groups are not meaningful.</p>
        <p>Clusters drawn by eye on a projection can be artefacts; Asterism computes them in the full latent space.</p>
        <p>Factor maps of people can expose sensitive attributes. This workspace is private to its members.</p>
      </aside>
    </div>
  );
}
