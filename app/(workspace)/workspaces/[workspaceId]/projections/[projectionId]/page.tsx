import type { Metadata } from 'next';
import Link from 'next/link';
import { notFound } from 'next/navigation';
import { MapWorkspace } from '@/components/map/map-workspace';
import type { MapProjectionInfo, WireClustering } from '@/components/map/types';
import { db } from '@/db';
import { toClustering } from '@/lib/clusterings/clusterings';
import { findFactorSet } from '@/lib/factor-sets/factor-sets';
import { decodeViewParam, defaultView } from '@/lib/map/view-state';
import { can } from '@/lib/permissions';
import { findProjection, listProjections, type Projection } from '@/lib/projections/projections';
import { uuidParam } from '@/lib/validation/common';
import { findView } from '@/lib/views/views';
import { workspaceForPage } from '@/lib/workspaces/page-access';

export const metadata: Metadata = { title: 'Map' };

function wire(p: Projection): MapProjectionInfo {
  return {
    id: p.id,
    method: p.method,
    params: p.params,
    seed: p.seed,
    status: p.status,
    quality: p.quality,
    versions: p.versions,
    inputChecksum: p.inputChecksum,
    durationMs: p.durationMs,
    createdAt: p.createdAt.toISOString(),
  };
}

export default async function MapPage({
  params,
  searchParams,
}: {
  params: Promise<{ workspaceId: string; projectionId: string }>;
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const { workspaceId, projectionId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  const projection = uuidParam.safeParse(projectionId).success ? await findProjection(db, projectionId) : undefined;
  const factorSet = projection ? await findFactorSet(db, projection.factorSetId) : undefined;
  if (!projection || !factorSet || factorSet.workspaceId !== workspace.id) notFound();

  const projections = (await listProjections(db, factorSet.id)).filter((p) => p.status === 'done');
  const clusteringRows = await db.selectFrom('clusterings').selectAll().where('factor_set_id', '=', factorSet.id).where('status', '=', 'done').orderBy('created_at', 'desc').execute();
  const clusterings: WireClustering[] = clusteringRows.map(toClustering).map((c) => ({ id: c.id, method: c.method, status: c.status, k: c.k, meanSilhouette: c.meanSilhouette }));

  const query = await searchParams;
  const raw = typeof query.view === 'string' ? query.view : undefined;
  const savedViewId = typeof query.savedView === 'string' ? query.savedView : undefined;
  let initialView = defaultView(projection.id);
  let viewProblem: string | null = null;
  if (savedViewId) {
    const saved = uuidParam.safeParse(savedViewId).success ? await findView(db, savedViewId) : undefined;
    if (!saved || saved.workspaceId !== workspace.id) viewProblem = 'the saved view no longer exists';
    else if (saved.projectionId !== projection.id) viewProblem = 'the saved view shows another projection';
    else initialView = saved.state;
  } else if (raw) {
    const decoded = decodeViewParam(raw);
    const known = new Set(projections.map((p) => p.id));
    if (!decoded.ok) viewProblem = decoded.error;
    else if (!known.has(decoded.view.projectionId) || (decoded.view.compareProjectionId && !known.has(decoded.view.compareProjectionId))) viewProblem = 'it names a projection that is not here';
    else initialView = decoded.view;
  }

  if (projection.status !== 'done') {
    return (
      <div className="flex flex-col gap-3">
        <p className="text-sm">
          <Link className="text-accent hover:underline" href={`/workspaces/${workspace.id}/factor-sets/${factorSet.id}`}>
            {factorSet.name}
          </Link>{' '}
          /
        </p>
        <p role="status">This projection is {projection.status}{projection.phase ? ` (${projection.phase})` : ''}; its map opens when it is done.</p>
      </div>
    );
  }

  return (
    <div className="relative left-1/2 flex w-[calc(100vw-3rem)] max-w-[1800px] -translate-x-1/2 flex-col gap-3">
      <div className="flex flex-wrap items-baseline justify-between gap-2">
        <div>
          <p className="text-sm">
            <Link className="text-accent underline" href={`/workspaces/${workspace.id}/factor-sets/${factorSet.id}`}>
              {factorSet.name}
            </Link>{' '}
            / map
          </p>
          <h2 className="text-xl font-semibold">Map of {factorSet.name}</h2>
        </div>
        <p className="max-w-xl text-xs text-ink-muted">
          {factorSet.rows.toLocaleString('en-GB')} entities × {factorSet.dims} dimensions. Input SHA-256 {projection.inputChecksum.slice(0, 12)}…, seed {projection.seed}
          {projection.versions ? `, ${Object.entries(projection.versions).map(([k, v]) => `${k} ${v}`).join(', ')}` : ''}. Factor maps of people can expose sensitive attributes: this workspace is private.
        </p>
      </div>
      <MapWorkspace
        workspaceId={workspace.id}
        factorSet={{ id: factorSet.id, name: factorSet.name, rows: factorSet.rows, dims: factorSet.dims, draws: factorSet.draws, jointPartnerId: factorSet.jointPartnerId }}
        projection={wire(projection)}
        projections={projections.map(wire)}
        clusterings={clusterings}
        permissions={{ editAnnotations: can(role, 'annotations.edit'), saveViews: can(role, 'views.save') }}
        initialView={initialView}
        viewProblem={viewProblem}
      />
    </div>
  );
}
