import { isUniqueViolation } from '@/lib/users/users';

/** How one kind of queued computation (projection, clustering) finds, records and enqueues its rows. */
export interface QueuedRowOps<Row extends { id: string }> {
  /** The live row (queued, running or done) for the same input, method, settings and seed. */
  findLive(): Promise<Row | undefined>;
  insert(): Promise<Row>;
  /** The partial unique index that makes `findLive` hold under concurrent requests. */
  dedupConstraint: string;
  enqueue(id: string): Promise<string>;
  recordJob(id: string, jobId: string): Promise<void>;
  /** Marks a row whose job the queue refused, so it is neither left queued nor pulled from under a concurrent request. */
  markRefused(id: string): Promise<void>;
}

/**
 * Returns the live row for an identical request, or inserts one and queues its job. A concurrent
 * identical insert loses on the unique index and gets the winner's row.
 */
export async function findOrQueue<Row extends { id: string }>(ops: QueuedRowOps<Row>): Promise<{ row: Row; existing: boolean }> {
  const found = await ops.findLive();
  if (found) return { row: found, existing: true };
  let row: Row;
  try {
    row = await ops.insert();
  } catch (error) {
    const raced = isUniqueViolation(error, ops.dedupConstraint) ? await ops.findLive() : undefined;
    if (raced) return { row: raced, existing: true };
    throw error;
  }
  try {
    await ops.recordJob(row.id, await ops.enqueue(row.id));
  } catch (error) {
    await ops.markRefused(row.id);
    throw error;
  }
  return { row, existing: false };
}
