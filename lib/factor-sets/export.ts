import 'server-only';
import type { BlockKind } from '@/db/types';
import type { DbOrTx } from '@/lib/users/users';
import { bytesStream, floatsOf, readBlocks } from './blocks';

/** Shortest decimal that reads back as the same float32, so CSV exports round-trip exactly. */
export function float32ToText(value: number): string {
  for (let digits = 6; digits < 9; digits += 1) {
    const text = Number(value.toPrecision(digits)).toString();
    if (Math.fround(Number(text)) === value) return text;
  }
  return Number(value.toPrecision(9)).toString();
}

function csvField(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** The stored matrix as float32 little-endian bytes, one block at a time. */
export function binaryStream(db: DbOrTx, factorSetId: string, kind: BlockKind): ReadableStream<Uint8Array> {
  return bytesStream(
    (async function* () {
      for await (const block of readBlocks(db, factorSetId, kind)) yield block.data;
    })(),
  );
}

/** The stored matrix as CSV with entity ids: `id,dim_1,…,dim_K`. */
export function csvStream(db: DbOrTx, factorSetId: string, kind: BlockKind, dims: number): ReadableStream<Uint8Array> {
  const blocks = readBlocks(db, factorSetId, kind);
  const encoder = new TextEncoder();
  let headerSent = false;
  return new ReadableStream<Uint8Array>({
    async pull(controller) {
      if (!headerSent) {
        headerSent = true;
        controller.enqueue(encoder.encode(`id,${Array.from({ length: dims }, (_, k) => `dim_${k + 1}`).join(',')}\n`));
        return;
      }
      const next = await blocks.next();
      if (next.done) {
        controller.close();
        return;
      }
      const { rowStart, rowCount, data } = next.value;
      const floats = floatsOf(data);
      const ids = await db
        .selectFrom('factor_set_entities')
        .select('entity_id')
        .where('factor_set_id', '=', factorSetId)
        .where('idx', '>=', rowStart)
        .where('idx', '<', rowStart + rowCount)
        .orderBy('idx')
        .execute();
      const lines: string[] = [];
      for (let r = 0; r < rowCount; r += 1) {
        const cells = [csvField(ids[r]?.entity_id ?? String(rowStart + r + 1))];
        for (let k = 0; k < dims; k += 1) cells.push(float32ToText(floats[r * dims + k] ?? Number.NaN));
        lines.push(cells.join(','));
      }
      controller.enqueue(encoder.encode(`${lines.join('\n')}\n`));
    },
    async cancel() {
      await blocks.return(undefined);
    },
  });
}
