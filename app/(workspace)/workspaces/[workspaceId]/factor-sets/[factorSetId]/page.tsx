import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { db } from '@/db';
import { findFactorSet } from '@/lib/factor-sets/factor-sets';
import { lastProjectionSettings } from '@/lib/factor-sets/preferences';
import { workspaceForPage } from '@/lib/workspaces/page-access';
import { can } from '@/lib/permissions';
import { ClustersPanel } from './clusters-panel';
import { EntitiesTable } from './entities-table';
import { ProjectionsPanel } from './projections-panel';

export const metadata: Metadata = { title: 'Factor set' };

const when = new Intl.DateTimeFormat('en-GB', { dateStyle: 'medium', timeStyle: 'short' });

export default async function FactorSetPage({ params }: { params: Promise<{ workspaceId: string; factorSetId: string }> }) {
  const { workspaceId, factorSetId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  const factorSet = /^[0-9a-f-]{36}$/i.test(factorSetId) ? await findFactorSet(db, factorSetId) : undefined;
  if (!factorSet || factorSet.workspaceId !== workspace.id) notFound();
  const partner = factorSet.jointPartnerId ? await findFactorSet(db, factorSet.jointPartnerId) : undefined;
  const alignment = factorSet.report.alignment;
  const lastSettings = await lastProjectionSettings(db, factorSet.id);
  return (
    <div className="flex flex-col gap-6">
      <div>
        <p className="text-sm">
          <Link className="text-accent hover:underline" href={`/workspaces/${workspace.id}`}>
            Factor sets
          </Link>{' '}
          /
        </p>
        <h2 className="text-xl font-semibold" data-testid="factor-set-name">
          {factorSet.name}
        </h2>
      </div>
      <dl className="tabular grid grid-cols-2 gap-x-6 gap-y-3 border border-rule bg-paper-raised p-4 text-sm md:grid-cols-4">
        <div>
          <dt className="text-ink-muted">Entities × dimensions</dt>
          <dd data-testid="factor-set-shape">
            {factorSet.rows} × {factorSet.dims}
          </dd>
        </div>
        <div>
          <dt className="text-ink-muted">Posterior draws</dt>
          <dd>{factorSet.draws > 0 ? `${factorSet.draws}, aligned` : 'none (point estimates)'}</dd>
        </div>
        <div>
          <dt className="text-ink-muted">Format</dt>
          <dd>{factorSet.format}</dd>
        </div>
        <div>
          <dt className="text-ink-muted">Imported</dt>
          <dd>{when.format(factorSet.createdAt)}</dd>
        </div>
        <div className="col-span-2">
          <dt className="text-ink-muted">Source file</dt>
          <dd className="truncate">
            {factorSet.sourceName} ({factorSet.sourceBytes.toLocaleString('en-GB')} bytes)
          </dd>
        </div>
        <div className="col-span-2">
          <dt className="text-ink-muted">SHA-256 of the upload</dt>
          <dd className="truncate font-mono text-xs" title={factorSet.checksumSha256}>
            {factorSet.checksumSha256}
          </dd>
        </div>
        {alignment && (
          <div className="col-span-2">
            <dt className="text-ink-muted">Alignment of draws</dt>
            <dd>
              Generalised Procrustes{alignment.joint ? ' (joint with partner)' : ''}, {alignment.iterations} iterations,{' '}
              {alignment.converged ? 'converged' : 'did not converge'}
            </dd>
          </div>
        )}
        {partner && (
          <div className="col-span-2">
            <dt className="text-ink-muted">Joint partner</dt>
            <dd>
              <Link className="text-accent hover:underline" href={`/workspaces/${workspace.id}/factor-sets/${partner.id}`}>
                {partner.name}
              </Link>
            </dd>
          </div>
        )}
      </dl>
      {factorSet.report.warnings.length > 0 && (
        <div className="border border-caution/50 bg-caution-wash p-3 text-sm">
          <p className="font-semibold">Import warnings</p>
          <ul className="list-inside list-disc">
            {factorSet.report.warnings.map((w, i) => (
              <li key={i}>{w}</li>
            ))}
          </ul>
        </div>
      )}
      <p className="text-sm">
        Download the values:{' '}
        <a className="text-accent hover:underline" href={`/api/factor-sets/${factorSet.id}/values?format=csv`}>
          CSV
        </a>{' '}
        ·{' '}
        <a className="text-accent hover:underline" href={`/api/factor-sets/${factorSet.id}/values`}>
          float32 binary
        </a>
        {factorSet.draws > 0 && (
          <>
            {' '}
            · posterior SD{' '}
            <a className="text-accent hover:underline" href={`/api/factor-sets/${factorSet.id}/values?kind=sd&format=csv`}>
              CSV
            </a>
          </>
        )}
      </p>
      <ProjectionsPanel workspaceId={workspace.id} factorSetId={factorSet.id} mayRun={can(role, 'projections.run')} mayDelete={can(role, 'projections.delete')} lastSettings={lastSettings} />
      <ClustersPanel factorSetId={factorSet.id} mayRun={can(role, 'projections.run')} />
      <EntitiesTable factorSetId={factorSet.id} metadataColumns={factorSet.metadataColumns} hasSpread={factorSet.draws > 0} />
    </div>
  );
}
