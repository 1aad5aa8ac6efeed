import type { Metadata } from 'next';
import { notFound } from 'next/navigation';
import { can } from '@/lib/permissions';
import { workspaceForPage } from '@/lib/workspaces/page-access';
import { FitForm } from './fit-form';

export const metadata: Metadata = { title: 'Fit a factorization machine' };

export default async function NewFitPage({ params }: { params: Promise<{ workspaceId: string }> }) {
  const { workspaceId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  if (!can(role, 'factor-sets.fit')) notFound();
  return (
    <div className="flex flex-col gap-6">
      <div>
        <h2 className="text-xl font-semibold">Fit a factorization machine</h2>
        <p className="mt-1 max-w-prose text-sm text-ink-muted">
          Upload a long table — delimited text with a header, one row per observation of a pair of entities (shop × category, respondent × item) with an outcome and optionally covariates and an
          offset. The table is checked in full before the fit is queued; bad values are named by line and column and nothing is stored. The fit runs in the background and creates two factor sets.
        </p>
      </div>
      <FitForm workspaceId={workspace.id} />
    </div>
  );
}
