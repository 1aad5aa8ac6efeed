import { can } from '@/lib/permissions';
import { workspaceForPage } from '@/lib/workspaces/page-access';

export default async function WorkspaceHomePage({ params }: { params: Promise<{ workspaceId: string }> }) {
  const { workspaceId } = await params;
  const { role } = await workspaceForPage(workspaceId);
  const mayImport = can(role, 'factor-sets.import');
  return (
    <div className="grid gap-6 lg:grid-cols-[1fr_320px]">
      <section aria-labelledby="factor-sets-heading" className="border border-dashed border-rule bg-paper-raised p-8">
        <h2 id="factor-sets-heading" className="text-lg font-semibold">
          No factor sets yet
        </h2>
        <p className="mt-2 max-w-prose text-ink-muted">
          Everything here starts from a factor set: a matrix of fitted latent factors with one row per entity (a
          shop, a respondent, a product) and one column per latent dimension, optionally with posterior draws.
        </p>
        {mayImport ? (
          <div className="mt-5 flex flex-col gap-2">
            <p className="text-sm">
              <strong>Next step: import factors.</strong> Importing from delimited text, posterior-draw tables, NumPy
              and JSON files is the next part of Asterism being built; the button below turns on when it lands.
            </p>
            <div>
              <button
                type="button"
                disabled
                aria-describedby="import-pending"
                className="border border-accent bg-accent px-3.5 py-2 text-sm font-medium text-accent-ink opacity-50"
              >
                Import a factor set
              </button>
              <p id="import-pending" className="mt-1 text-xs text-ink-muted">
                Not available yet.
              </p>
            </div>
          </div>
        ) : (
          <p className="mt-5 text-sm text-ink-muted">
            An analyst or owner of this workspace imports factor sets; they will appear here.
          </p>
        )}
      </section>
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
