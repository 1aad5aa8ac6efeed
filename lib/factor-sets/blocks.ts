import { sql } from 'kysely';
import { endianness } from 'node:os';
import type { BlockKind } from '@/db/types';
import type { DbOrTx } from '@/lib/users/users';
import type { BulkTransaction } from './bulk';

// Blocks are written as the platform's bytes; every server we run on is little-endian, as the format says.
if (endianness() !== 'LE') throw new Error('Asterism stores float32 little-endian and needs a little-endian host');

/** Target size of one stored block: large enough for few rows in the table, small enough that no value is ever huge. */
export const BLOCK_TARGET_BYTES = 4 * 1024 * 1024;

export function rowsPerBlock(floatsPerRow: number): number {
  return Math.max(1, Math.floor(BLOCK_TARGET_BYTES / (floatsPerRow * 4)));
}

/** The row ranges of a matrix cut into blocks of `blockRows` rows. */
export function* blockRanges(rows: number, blockRows: number): Generator<{ block: number; rowStart: number; rowCount: number }> {
  for (let block = 0, rowStart = 0; rowStart < rows; block += 1, rowStart += blockRows) {
    yield { block, rowStart, rowCount: Math.min(blockRows, rows - rowStart) };
  }
}

/** Reads stored blocks one at a time in block order; `fetchFrom(next)` returns the first block numbered ≥ next. */
export async function* keysetBlocks<T extends { block: number }>(fetchFrom: (next: number) => Promise<T | undefined>): AsyncGenerator<T> {
  let next = 0;
  for (;;) {
    const row = await fetchFrom(next);
    if (!row) return;
    next = row.block + 1;
    yield row;
  }
}

/** A stream of stored blocks' bytes, pulling the next block only when the reader wants it. */
export function bytesStream(blocks: AsyncGenerator<Buffer>): ReadableStream<Uint8Array> {
  return new ReadableStream<Uint8Array>({
    async pull(controller) {
      const next = await blocks.next();
      if (next.done) controller.close();
      else controller.enqueue(new Uint8Array(next.value.buffer, next.value.byteOffset, next.value.byteLength));
    },
    async cancel() {
      await blocks.return(undefined);
    },
  });
}

/** A stored block's bytes as floats; copied, since node-pg's Buffers need not start 4-byte aligned. */
export function floatsOf(data: Buffer): Float32Array {
  return new Float32Array(data.buffer.slice(data.byteOffset, data.byteOffset + data.byteLength));
}

/** A view of a Float32Array range as little-endian bytes, without copying. */
export function bytesOf(data: Float32Array, start: number, length: number): Buffer {
  return Buffer.from(data.buffer, data.byteOffset + start * 4, length * 4);
}

/** Writes an N×width matrix (row-major) as row blocks. */
export async function writeMatrixBlocks(
  tx: BulkTransaction,
  factorSetId: string,
  kind: BlockKind,
  data: Float32Array,
  rows: number,
  width: number,
  blockRows: number,
): Promise<void> {
  for (const { block, rowStart, rowCount } of blockRanges(rows, blockRows)) {
    await tx.execute(
      tx.builder.insertInto('factor_set_blocks').values({
        factor_set_id: factorSetId,
        kind,
        block,
        row_start: rowStart,
        row_count: rowCount,
        data: bytesOf(data, rowStart * width, rowCount * width),
      }),
    );
  }
}

/**
 * Writes D×N×K draws (draw-major, as aligned) entity-major, so that one entity's D×K draws sit in
 * one block and the map can fetch a single entity's cloud cheaply.
 */
export async function writeDrawBlocks(
  tx: BulkTransaction,
  factorSetId: string,
  draws: Float32Array,
  drawCount: number,
  rows: number,
  dims: number,
  blockRows: number,
): Promise<void> {
  const perEntity = drawCount * dims;
  for (const { block, rowStart, rowCount } of blockRanges(rows, blockRows)) {
    const out = new Float32Array(rowCount * perEntity);
    for (let r = 0; r < rowCount; r += 1) {
      for (let d = 0; d < drawCount; d += 1) {
        const from = (d * rows + rowStart + r) * dims;
        out.set(draws.subarray(from, from + dims), r * perEntity + d * dims);
      }
    }
    await tx.execute(
      tx.builder
        .insertInto('factor_set_blocks')
        .values({ factor_set_id: factorSetId, kind: 'draws', block, row_start: rowStart, row_count: rowCount, data: bytesOf(out, 0, out.length) }),
    );
  }
}

/** Yields a stored matrix block by block, in row order, holding one block in memory at a time. */
export async function* readBlocks(db: DbOrTx, factorSetId: string, kind: BlockKind): AsyncGenerator<{ rowStart: number; rowCount: number; data: Buffer }> {
  const blocks = keysetBlocks((next) =>
    db
      .selectFrom('factor_set_blocks')
      .select(['block', 'row_start', 'row_count', 'data'])
      .where('factor_set_id', '=', factorSetId)
      .where('kind', '=', kind)
      .where('block', '>=', next)
      .orderBy('block')
      .limit(1)
      .executeTakeFirst(),
  );
  for await (const row of blocks) yield { rowStart: row.row_start, rowCount: row.row_count, data: row.data };
}

/** A whole stored N×width matrix as one Float32Array. */
export async function readMatrix(db: DbOrTx, factorSetId: string, kind: BlockKind, rows: number, width: number): Promise<Float32Array> {
  const out = new Float32Array(rows * width);
  for await (const block of readBlocks(db, factorSetId, kind)) {
    out.set(floatsOf(block.data), block.rowStart * width);
  }
  return out;
}

/**
 * One row of a stored N×width matrix: only that row's bytes leave the database (a substring of
 * its block), so a query about one entity of a 1,000,000-row set reads width·4 bytes.
 */
export async function readMatrixRow(db: DbOrTx, factorSetId: string, kind: BlockKind, row: number, width: number): Promise<Float32Array> {
  if (!Number.isInteger(row) || row < 0) throw new RangeError(`row ${row} is not a row index`);
  const found = await db
    .selectFrom('factor_set_blocks')
    .select((eb) => [sql<Buffer>`substring(${eb.ref('data')} from 1 + (${row} - ${eb.ref('row_start')}) * ${width * 4} for ${width * 4})`.as('bytes')])
    .where('factor_set_id', '=', factorSetId)
    .where('kind', '=', kind)
    .where('row_start', '<=', row)
    .where(sql<boolean>`${sql.ref('row_start')} + ${sql.ref('row_count')} > ${row}`)
    .executeTakeFirst();
  if (!found || found.bytes.byteLength !== width * 4) throw new RangeError(`row ${row} is not stored in this factor set`);
  return floatsOf(found.bytes);
}
