import type { Metadata } from 'next';
import { notFound } from 'next/navigation';
import { can } from '@/lib/permissions';
import { workspaceForPage } from '@/lib/workspaces/page-access';
import { ImportWizard } from './import-wizard';

export const metadata: Metadata = { title: 'Import a factor set' };

export default async function ImportPage({ params }: { params: Promise<{ workspaceId: string }> }) {
  const { workspaceId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  if (!can(role, 'factor-sets.import')) notFound();
  return (
    <div className="flex flex-col gap-6">
      <div>
        <h2 className="text-xl font-semibold">Import a factor set</h2>
        <p className="mt-1 max-w-prose text-sm text-ink-muted">
          Delimited text (one row per entity, or entity–dimension–value triples), posterior draws (one row per draw
          with columns like <code>gamma[i,k]</code> or <code>gamma.i.k</code>, or draw–entity–dimension–value rows),
          NumPy <code>.npy</code> (N×K or draws×N×K, float32 or float64) or JSON. Nothing is stored until you confirm.
        </p>
      </div>
      <ImportWizard workspaceId={workspace.id} />
    </div>
  );
}
