import { z } from 'zod';
import { mapViewSchema } from '@/lib/map/view-state';

export const viewNameField = z.string({ error: 'Enter a name' }).trim().min(1, 'Enter a name').max(120, 'A name has at most 120 characters');

/** `POST /api/workspaces/{id}/views` and the save-view form. */
export const createViewSchema = z.strictObject({ name: viewNameField, state: mapViewSchema });
export type CreateViewInput = z.output<typeof createViewSchema>;

/** `PATCH /api/views/{id}`; with `version`, a stale edit is refused (409). */
export const updateViewSchema = z.strictObject({
  version: z.number().int().min(1).optional(),
  name: viewNameField.optional(),
  state: mapViewSchema.optional(),
});
export type UpdateViewInput = z.output<typeof updateViewSchema>;
