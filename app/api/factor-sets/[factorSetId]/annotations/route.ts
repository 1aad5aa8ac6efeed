import { db } from '@/db';
import { annotationsFingerprint } from '@/lib/annotations/annotations';
import { createAnnotationAs, listAnnotationsFor } from '@/lib/annotations/service';
import { apiRoute, json, readJson, validated } from '@/lib/api/route';
import { requireActor } from '@/lib/auth/actor';
import { requireFactorSetAccess } from '@/lib/factor-sets/access';
import { ANNOTATION_BODY_MAX_BYTES, annotationListQuerySchema, createAnnotationSchema } from '@/lib/validation/annotations';

type Ctx = { params: Promise<{ factorSetId: string }> };

/**
 * `?members=ids|indices|none` → `{items: [...]}`. Answers carry an ETag of the annotations' ids and
 * versions; an open map polls with If-None-Match and gets 304 until someone changes something.
 */
export const GET = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  const query = validated(annotationListQuerySchema, Object.fromEntries(new URL(request.url).searchParams));
  await requireFactorSetAccess(db, user.id, factorSetId, 'workspace.view');
  const etag = `W/"${query.members}-${await annotationsFingerprint(db, factorSetId)}"`;
  if (request.headers.get('if-none-match') === etag) return new Response(null, { status: 304, headers: { ETag: etag, 'Cache-Control': 'no-cache' } });
  const items = await listAnnotationsFor(db, user, factorSetId, query.members);
  return json({ items }, { headers: { ETag: etag, 'Cache-Control': 'no-cache' } });
});

/** `{name, color, description, entities | indices | clusterProposal}` → 201 the annotation (owner, analyst, expert). */
export const POST = apiRoute(async (request, ctx: Ctx) => {
  const { factorSetId } = await ctx.params;
  const { user } = await requireActor(request);
  await requireFactorSetAccess(db, user.id, factorSetId, 'annotations.edit');
  const input = await readJson(request, createAnnotationSchema, ANNOTATION_BODY_MAX_BYTES);
  return json(await createAnnotationAs(db, user, factorSetId, input), 201);
});
