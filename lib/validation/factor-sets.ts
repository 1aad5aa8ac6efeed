import { z } from 'zod';
import { IMPORT_FORMATS } from '@/lib/import/types';

export const factorSetNameField = z
  .string()
  .trim()
  .min(1, 'Name the factor set')
  .max(120, 'A factor set name has at most 120 characters');

/** The `options` part of an import: everything detection may get wrong, overridable by the analyst. */
export const importOptionsSchema = z.strictObject({
  idColumn: z.string().trim().min(1).max(200).optional(),
  labelColumn: z.string().trim().min(1).max(200).optional(),
  /** Numeric columns to keep as metadata rather than factors (e.g. footfall). */
  metadataColumns: z.array(z.string().trim().min(1).max(200)).max(200).optional(),
  delimiter: z.enum([',', '\t', ';']).optional(),
  header: z.boolean().optional(),
  parameter: z.string().trim().min(1).max(100).optional(),
  /** A second parameter of the same fit (row and column factors): imported as a joint partner. */
  partnerParameter: z.string().trim().min(1).max(100).optional(),
});
export type ImportOptions = z.infer<typeof importOptionsSchema>;

/** The text fields of the multipart upload (the files travel beside them). */
export const importFieldsSchema = z.strictObject({
  name: factorSetNameField.optional(),
  format: z.enum(IMPORT_FORMATS).optional(),
  options: z
    .string()
    .max(10_000)
    .optional()
    .transform((text, ctx) => {
      if (!text) return {};
      try {
        return JSON.parse(text) as unknown;
      } catch {
        ctx.addIssue({ code: 'custom', message: 'options must be a JSON object' });
        return z.NEVER;
      }
    })
    .pipe(importOptionsSchema),
});
export type ImportFields = z.output<typeof importFieldsSchema>;

export const confirmImportSchema = z.strictObject({ name: factorSetNameField.optional() });

export const alignSchema = z.strictObject({ to: z.uuid({ error: 'to must be the id of another factor set' }) });

export const entityQuerySchema = z.object({
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(500).default(50),
  sort: z
    .string()
    .regex(/^(index|id|label|spread|metadata:.{1,200})$/, 'sort is index, id, label, spread or metadata:<column>')
    .default('index'),
  dir: z.enum(['asc', 'desc']).default('asc'),
  q: z.string().trim().max(200).optional(),
});
