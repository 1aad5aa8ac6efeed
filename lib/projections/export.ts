import 'server-only';
import { ApiError } from '@/lib/api/errors';
import type { DbOrTx } from '@/lib/users/users';
import { bytesStream } from '@/lib/factor-sets/blocks';
import { type Projection, readProjectionBlocks } from './projections';

/** A finished projection's stored float32 result, streamed block by block. */
export function projectionStream(db: DbOrTx, projection: Projection, kind: 'coords' | 'fidelity'): Response {
  if (projection.status !== 'done') throw new ApiError(409, 'not_ready', `The projection is ${projection.status}; results exist once it is done`);
  return new Response(bytesStream(readProjectionBlocks(db, projection.id, kind)), { headers: { 'Content-Type': 'application/octet-stream', 'Cache-Control': 'private, no-store' } });
}
