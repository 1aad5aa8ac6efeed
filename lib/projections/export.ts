import 'server-only';
import { ApiError } from '@/lib/api/errors';
import type { DbOrTx } from '@/lib/users/users';
import { type Projection, readProjectionBlocks } from './projections';

/** A finished projection's stored float32 result, streamed block by block. */
export function projectionStream(db: DbOrTx, projection: Projection, kind: 'coords' | 'fidelity'): Response {
  if (projection.status !== 'done') throw new ApiError(409, 'not_ready', `The projection is ${projection.status}; results exist once it is done`);
  const blocks = readProjectionBlocks(db, projection.id, kind);
  const body = new ReadableStream<Uint8Array>({
    async pull(controller) {
      const next = await blocks.next();
      if (next.done) controller.close();
      else controller.enqueue(new Uint8Array(next.value.buffer, next.value.byteOffset, next.value.byteLength));
    },
    async cancel() {
      await blocks.return(undefined);
    },
  });
  return new Response(body, { headers: { 'Content-Type': 'application/octet-stream', 'Cache-Control': 'private, no-store' } });
}
