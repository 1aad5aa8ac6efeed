import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { db } from '@/db';
import { findFactorSet } from '@/lib/factor-sets/factor-sets';
import { findFit } from '@/lib/fits/fits';
import { can } from '@/lib/permissions';
import { uuidParam } from '@/lib/validation/common';
import { workspaceForPage } from '@/lib/workspaces/page-access';
import { FitView, type WireFit } from './fit-view';

export const metadata: Metadata = { title: 'Fit' };

export default async function FitPage({ params }: { params: Promise<{ workspaceId: string; fitId: string }> }) {
  const { workspaceId, fitId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  const fit = uuidParam.safeParse(fitId).success ? await findFit(db, fitId) : undefined;
  if (!fit || fit.workspaceId !== workspace.id) notFound();
  const names: Record<string, string> = {};
  for (const id of [fit.rowFactorSetId, fit.columnFactorSetId]) {
    if (!id) continue;
    const set = await findFactorSet(db, id);
    if (set) names[id] = set.name;
  }
  // Dates travel as ISO strings, as the API sends them to the polling client.
  const initial = JSON.parse(JSON.stringify(fit)) as WireFit;
  return (
    <div className="flex flex-col gap-6">
      <div>
        <p className="text-sm">
          <Link className="text-accent hover:underline" href={`/workspaces/${workspace.id}/fits`}>
            Fits
          </Link>{' '}
          /
        </p>
        <h2 className="text-xl font-semibold" data-testid="fit-name">
          {fit.name}
        </h2>
        <p className="text-sm text-ink-muted">A factorization machine: y ~ g⁻¹(μ + a_row + b_column + xᵀβ + γ_row·δ_column + offset).</p>
      </div>
      <FitView initial={initial} workspaceId={workspace.id} mayManage={can(role, 'factor-sets.fit')} factorSetNames={names} />
    </div>
  );
}
