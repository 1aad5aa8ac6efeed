/**
 * Inputs of the fit API, shared by the fit form and the routes (zod only, so a client bundle may
 * import it). The settings themselves are lib/fit/settings.ts's fitSettingsSchema.
 */
import { z } from 'zod';
import { fitSettingsSchema } from '@/lib/fit/settings';

export const fitNameField = z.string().trim().min(1, 'Name the fit').max(120, 'A fit name has at most 120 characters');

/** The text fields of `POST /api/workspaces/{id}/fits` (the table travels beside them as `file`). */
export const fitUploadFieldsSchema = z.strictObject({
  name: fitNameField.optional(),
  settings: z
    .string({ error: 'Send the settings as a JSON string in the "settings" field' })
    .max(60_000, 'The settings are at most 60,000 characters of JSON')
    .transform((text, ctx) => {
      try {
        return JSON.parse(text) as unknown;
      } catch {
        ctx.addIssue({ code: 'custom', message: 'settings must be a JSON object, e.g. {"rowColumn":"shop","columnColumn":"category","outcome":"sales","likelihood":"poisson","rank":4}' });
        return z.NEVER;
      }
    })
    .pipe(fitSettingsSchema),
});
export type FitUploadFields = z.output<typeof fitUploadFieldsSchema>;

/** Most pairs per prediction request. */
export const MAX_PREDICT_PAIRS = 10_000;

const entityId = z.string({ error: 'An entity id is a string' }).max(1000, 'An entity id has at most 1000 characters');

/** `POST /api/fits/{id}/predict`. */
export const predictRequestSchema = z.strictObject({
  pairs: z
    .array(z.tuple([entityId, entityId], { error: 'Each pair is [rowEntity, columnEntity]' }), { error: 'pairs is a list of [rowEntity, columnEntity]' })
    .min(1, 'Give at least one pair')
    .max(MAX_PREDICT_PAIRS, `At most ${MAX_PREDICT_PAIRS} pairs per request`),
  /**
   * Per pair, the covariate values in the fit's covariate order (the response's covariateNames:
   * numeric columns as given, then one 0/1 indicator per non-reference level). Default: every pair
   * at the covariate means of the fitted data.
   */
  covariates: z.array(z.array(z.number().finite('Covariates are finite numbers'))).optional(),
  /** Per pair, the offset column's value on the fit's scale (log scale, or the exposure itself with offsetScale "exposure"). Default: log offset 0. */
  offset: z.array(z.number().finite('Offsets are finite numbers')).optional(),
  /**
   * false (default): an entity the fit never saw is refused with a 400 naming it. true: it is
   * predicted from the prior (its main effect and factors 0), i.e. from the other entity and μ alone.
   */
  allowUnknown: z.boolean().optional(),
});
export type PredictRequest = z.output<typeof predictRequestSchema>;

/** `GET /api/fits/{id}/affinity?row=…&limit=…`. */
export const affinityQuerySchema = z.strictObject({
  row: entityId.min(1, 'Name the row entity: ?row=<id>'),
  limit: z.coerce.number().int().min(1).max(1000).default(20),
});

/** The fit form: the same settings schema as the API's `settings` field, plus the name. */
export const fitFormSchema = z.strictObject({
  name: fitNameField.optional(),
  settings: fitSettingsSchema,
});
export type FitFormInput = z.input<typeof fitFormSchema>;
export type FitFormOutput = z.output<typeof fitFormSchema>;
