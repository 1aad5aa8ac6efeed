import { z } from 'zod';
import { emailField, roleField, workspaceNameField } from './common';

export const createWorkspaceSchema = z.strictObject({ name: workspaceNameField });
export type CreateWorkspaceInput = z.input<typeof createWorkspaceSchema>;

export const renameWorkspaceSchema = z.strictObject({ name: workspaceNameField });
export type RenameWorkspaceInput = z.input<typeof renameWorkspaceSchema>;

export const addMemberSchema = z.strictObject({ email: emailField, role: roleField });
export type AddMemberInput = z.input<typeof addMemberSchema>;

export const changeRoleSchema = z.strictObject({ role: roleField });
export type ChangeRoleInput = z.input<typeof changeRoleSchema>;

export const inviteSchema = z.strictObject({ email: emailField, role: roleField });
export type InviteInput = z.input<typeof inviteSchema>;
