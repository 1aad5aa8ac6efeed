'use server';

import { revalidatePath } from 'next/cache';
import { redirect } from 'next/navigation';
import { z } from 'zod';
import { db } from '@/db';
import { type ActionResult, runAction } from '@/lib/api/action-result';
import { ApiError, notFound } from '@/lib/api/errors';
import { requireUser } from '@/lib/auth/actor';
import { type AccessToken, createAccessToken, revokeAccessToken } from '@/lib/tokens/access-tokens';
import { uuidParam } from '@/lib/validation/common';
import { createTokenSchema } from '@/lib/validation/tokens';
import { createWorkspaceSchema, inviteSchema, renameWorkspaceSchema } from '@/lib/validation/workspaces';
import { inviteAs, removeMemberAs, renameWorkspaceAs, revokeInvitationAs } from '@/lib/workspaces/service';
import { requireWorkspaceAccess } from '@/lib/workspaces/access';
import { createWorkspace, deleteWorkspace } from '@/lib/workspaces/workspaces';

/*
 * Every action authenticates first and then goes through the same permission-checked service as
 * the API routes; the interface hiding a control is never the check.
 */

export async function createWorkspaceAction(input: unknown): Promise<ActionResult> {
  const user = await requireUser();
  const result = await runAction(createWorkspaceSchema, input, (data) => createWorkspace(db, user.id, data.name));
  if (!result.ok) return result;
  redirect(`/workspaces/${result.data.id}`);
}

export async function renameWorkspaceAction(workspaceId: string, input: unknown): Promise<ActionResult> {
  const user = await requireUser();
  const result = await runAction(renameWorkspaceSchema, input, async (data) => {
    await renameWorkspaceAs(db, user, workspaceId, data.name);
    return null;
  });
  if (result.ok) revalidatePath(`/workspaces/${workspaceId}`, 'layout');
  return result;
}

export async function deleteWorkspaceAction(workspaceId: string, confirmName: unknown): Promise<ActionResult> {
  const user = await requireUser();
  const result = await runAction(z.string(), confirmName, async (name) => {
    const { workspace } = await requireWorkspaceAccess(db, user.id, workspaceId, 'workspace.delete');
    if (name.trim() !== workspace.name) {
      throw new ApiError(400, 'confirmation_mismatch', 'Type the workspace name exactly as shown to delete it');
    }
    await deleteWorkspace(db, workspaceId);
    return null;
  });
  if (!result.ok) return result;
  redirect('/workspaces');
}

export async function leaveWorkspaceAction(workspaceId: string): Promise<ActionResult> {
  const user = await requireUser();
  const result = await runAction(uuidParam, workspaceId, async (id) => {
    await removeMemberAs(db, user, id, user.id);
    return null;
  });
  if (!result.ok) return result;
  redirect('/workspaces');
}

export async function inviteAction(workspaceId: string, input: unknown): Promise<ActionResult<{ email: string }>> {
  const user = await requireUser();
  const result = await runAction(inviteSchema, input, async (data) => {
    await inviteAs(db, user, workspaceId, data);
    return { email: data.email };
  });
  if (result.ok) revalidatePath(`/workspaces/${workspaceId}/members`);
  return result;
}

export async function revokeInvitationAction(workspaceId: string, invitationId: string): Promise<ActionResult> {
  const user = await requireUser();
  const result = await runAction(uuidParam, invitationId, async (id) => {
    await revokeInvitationAs(db, user, workspaceId, id);
    return null;
  });
  if (result.ok) revalidatePath(`/workspaces/${workspaceId}/members`);
  return result;
}

export async function createTokenAction(input: unknown): Promise<ActionResult<{ token: string; accessToken: AccessToken }>> {
  const user = await requireUser();
  const result = await runAction(createTokenSchema, input, (data) => createAccessToken(db, user.id, data.name));
  if (result.ok) revalidatePath('/settings/tokens');
  return result;
}

export async function revokeTokenAction(tokenId: string): Promise<ActionResult> {
  const user = await requireUser();
  const result = await runAction(uuidParam, tokenId, async (id) => {
    if (!(await revokeAccessToken(db, user.id, id))) throw notFound('No such active token');
    return null;
  });
  if (result.ok) revalidatePath('/settings/tokens');
  return result;
}
