import type { ReactNode } from 'react';
import { can } from '@/lib/permissions';
import { workspaceForPage } from '@/lib/workspaces/page-access';
import { WorkspaceTabs } from './_private/workspace-tabs';

export default async function WorkspaceLayout({
  children,
  params,
}: {
  children: ReactNode;
  params: Promise<{ workspaceId: string }>;
}) {
  const { workspaceId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  return (
    <div className="flex flex-col gap-6">
      <div className="flex flex-wrap items-baseline justify-between gap-3 border-b border-rule pb-4">
        <div>
          <p className="small-caps text-xs text-ink-muted">Workspace</p>
          <h1 className="text-2xl font-semibold tracking-tight" data-testid="workspace-name">
            {workspace.name}
          </h1>
        </div>
        <p className="text-sm text-ink-muted">
          Your role: <strong className="small-caps text-ink" data-testid="workspace-role">{role}</strong>
        </p>
      </div>
      <WorkspaceTabs workspaceId={workspace.id} showSettings={can(role, 'workspace.view')} />
      {children}
    </div>
  );
}
