import type { Metadata } from 'next';
import { can } from '@/lib/permissions';
import { workspaceForPage } from '@/lib/workspaces/page-access';
import { DeleteWorkspaceForm, LeaveWorkspaceButton, RenameWorkspaceForm } from '../_private/settings-forms';

export const metadata: Metadata = { title: 'Workspace settings' };

export default async function WorkspaceSettingsPage({ params }: { params: Promise<{ workspaceId: string }> }) {
  const { workspaceId } = await params;
  const { workspace, role } = await workspaceForPage(workspaceId);
  return (
    <div className="flex max-w-xl flex-col gap-8">
      {can(role, 'workspace.rename') && (
        <section className="flex flex-col gap-3">
          <h2 className="text-lg font-semibold">Name</h2>
          <RenameWorkspaceForm workspaceId={workspace.id} name={workspace.name} />
        </section>
      )}
      <section className="flex flex-col gap-3">
        <h2 className="text-lg font-semibold">Leave</h2>
        <p className="text-sm text-ink-muted">
          Leaving removes your access. The last owner cannot leave; make someone else an owner first.
        </p>
        <LeaveWorkspaceButton workspaceId={workspace.id} />
      </section>
      {can(role, 'workspace.delete') && (
        <section className="flex flex-col gap-3 border border-danger/40 p-5">
          <h2 className="text-lg font-semibold text-danger">Delete workspace</h2>
          <p className="text-sm text-ink-muted">
            Deletes the workspace with its members, invitations and everything stored in it. This cannot be undone.
          </p>
          <DeleteWorkspaceForm workspaceId={workspace.id} name={workspace.name} />
        </section>
      )}
    </div>
  );
}
