import { z } from 'zod';

/** An annotation's colour: a lowercase #rrggbb hex (the palette offers choices; any colour is stored). */
export const annotationColorField = z
  .string({ error: 'Pick a colour' })
  .trim()
  .toLowerCase()
  .regex(/^#[0-9a-f]{6}$/, 'A colour is written #rrggbb');

export const annotationNameField = z
  .string({ error: 'Enter a name' })
  .trim()
  .min(1, 'Enter a name')
  .max(80, 'A name has at most 80 characters');

export const annotationDescriptionField = z.string().trim().max(4000, 'A description has at most 4,000 characters');

/** At most a million members per request, the largest factor set the map is built for. */
const MAX_MEMBERS = 1_000_000;
const entityIdsField = z.array(z.string().min(1).max(500), { error: 'entities is a list of entity ids' }).max(MAX_MEMBERS);
/** Row indices in entity order (as the coordinates endpoint returns them): what the map sends. */
const entityIndicesField = z.array(z.number().int().min(0), { error: 'indices is a list of entity row indices' }).max(MAX_MEMBERS);

/** What the annotation form edits; the name, colour and description of a new or changed annotation. */
export const annotationFormSchema = z.strictObject({
  name: annotationNameField,
  color: annotationColorField,
  description: annotationDescriptionField.default(''),
});
export type AnnotationFormInput = z.input<typeof annotationFormSchema>;

/**
 * `POST /api/factor-sets/{id}/annotations`. Members come from exactly one of: entity ids, row
 * indices, or one label of a cluster proposal (accepting the proposal as an annotation).
 */
export const createAnnotationSchema = annotationFormSchema
  .extend({
    entities: entityIdsField.optional(),
    indices: entityIndicesField.optional(),
    clusterProposal: z.strictObject({ clusteringId: z.uuid('clusteringId is the id of a clustering'), label: z.number().int().min(0) }).optional(),
  })
  .refine((v) => [v.entities, v.indices, v.clusterProposal].filter((x) => x !== undefined).length === 1, {
    message: 'Give the members as exactly one of entities, indices or clusterProposal',
  });
export type CreateAnnotationInput = z.output<typeof createAnnotationSchema>;

/**
 * `PATCH /api/annotations/{id}`: `version` is the one the editor last saw; a stale one is refused
 * (409). Membership is replaced (`entities` / `indices`) or changed (`add` / `remove`, by id or index).
 */
export const updateAnnotationSchema = z
  .strictObject({
    version: z.number({ error: 'version is the version you edited' }).int().min(1),
    name: annotationNameField.optional(),
    color: annotationColorField.optional(),
    description: annotationDescriptionField.optional(),
    entities: entityIdsField.optional(),
    indices: entityIndicesField.optional(),
    add: z.strictObject({ entities: entityIdsField.optional(), indices: entityIndicesField.optional() }).optional(),
    remove: z.strictObject({ entities: entityIdsField.optional(), indices: entityIndicesField.optional() }).optional(),
  })
  .refine((v) => !(v.entities && v.indices), { message: 'Replace the members with entities or indices, not both' })
  .refine((v) => !((v.entities || v.indices) && (v.add || v.remove)), { message: 'Replace the members or add/remove some, not both' });
export type UpdateAnnotationInput = z.output<typeof updateAnnotationSchema>;

export const annotationListQuerySchema = z.strictObject({
  /** `ids` (default): members as entity ids, as the API promises; `indices`: row indices, for the map. */
  members: z.enum(['ids', 'indices', 'none']).default('ids'),
});

/** A million short entity ids as JSON: the body limit of the annotation routes. */
export const ANNOTATION_BODY_MAX_BYTES = 32 * 1024 * 1024;
