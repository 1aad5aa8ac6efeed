/**
 * Streams a long observation table from disk through the import module's delimited parser
 * (papaparse behind lib/import/text.ts: UTF-8 checked, byte offsets of bad bytes reported) into a
 * Design. The first line must be a header, since the settings name columns. Nothing here touches
 * the database; the caller stores the result (or nothing, on error).
 */
import { singleError } from '@/lib/import/places';
import { SAMPLE_ROWS, type Row } from '@/lib/import/rows';
import { checkTextHead, readHead, sniffRows, streamRows, type Delimiter } from '@/lib/import/text';
import type { UploadedFile } from '@/lib/import/types';
import { ObservationReader, type Design, type ObservationColumns } from './observations';

export async function readObservationFile(file: UploadedFile, settings: ObservationColumns, delimiter?: Delimiter): Promise<Design> {
  const head = await readHead(file.path);
  if (head.length === 0) throw singleError('empty_file', file.name, 'the file is empty');
  checkTextHead(head, file.name);
  const chosen = delimiter ?? sniffRows(head).delimiter;
  const reader = new ObservationReader(file.name, settings);
  let header: string[] | null = null;
  let started = false;
  const sample: Row[] = [];
  await streamRows(file, chosen, (cells, line) => {
    if (header === null) {
      header = cells.map((cell) => cell.trim());
      return;
    }
    if (started) {
      reader.add({ cells, line });
      return;
    }
    sample.push({ cells, line });
    if (sample.length >= SAMPLE_ROWS) {
      reader.start(header, sample);
      started = true;
      for (const row of sample) reader.add(row);
      sample.length = 0;
    }
  });
  if (header === null) throw singleError('empty_file', file.name, 'the file holds no rows');
  if (!started) {
    reader.start(header, sample);
    for (const row of sample) reader.add(row);
  }
  return reader.finish();
}
