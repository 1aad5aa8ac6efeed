import { z } from 'zod';
import { db } from '@/db';
import { deleteAnnotationAs, getAnnotationFor, updateAnnotationAs } from '@/lib/annotations/service';
import { apiRoute, json, readJson, validated } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { ANNOTATION_BODY_MAX_BYTES, annotationListQuerySchema, updateAnnotationSchema } from '@/lib/validation/annotations';

type Ctx = { params: Promise<{ annotationId: string }> };

export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { annotationId } = await ctx.params;
  const { user } = await requireActor(request);
  const query = validated(annotationListQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  return json(await getAnnotationFor(db, user, annotationId, query.members));
});

/** `{version, name?, color?, description?, entities? | indices? | add? / remove?}`; a stale version → 409. */
export const PATCH = apiRoute(async (request, ctx: Ctx) => {
  const { annotationId } = await ctx.params;
  const { user } = await requireActor(request);
  const input = await readJson(request, updateAnnotationSchema, ANNOTATION_BODY_MAX_BYTES);
  return json(await updateAnnotationAs(db, user, annotationId, input));
});

const deleteQuerySchema = z.strictObject({ version: z.coerce.number().int().min(1).optional() });

/** `?version=N` refuses the delete if the annotation changed since version N. */
export const DELETE = apiRoute(async (request, ctx: Ctx) => {
  const { annotationId } = await ctx.params;
  const { user } = await requireActor(request);
  const query = validated(deleteQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  await deleteAnnotationAs(db, user, annotationId, query.version);
  return new Response(null, { status: 204 });
});
