import 'server-only';
import { createHash, randomUUID } from 'node:crypto';
import { createReadStream, createWriteStream, promises as fs } from 'node:fs';
import path from 'node:path';
import { Readable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import busboy from 'busboy';
import { z } from 'zod';
import { ApiError } from '@/lib/api/errors';
import { ImportError } from '@/lib/import/types';

export interface StagedFile {
  path: string;
  name: string;
  bytes: number;
  sha256: string;
}

export interface StagedUpload {
  id: string;
  dir: string;
  file: StagedFile;
  labels?: StagedFile;
  fields: Record<string, string>;
}

const FILE_FIELDS = ['file', 'labels'] as const;
const STALE_AFTER_MS = 60 * 60 * 1000;

/** Removes uploads nobody confirmed within the hour. */
async function sweepStale(root: string): Promise<void> {
  let entries: string[];
  try {
    entries = await fs.readdir(root);
  } catch {
    return;
  }
  const now = Date.now();
  for (const entry of entries) {
    const dir = path.join(root, entry);
    try {
      if (now - (await fs.stat(dir)).mtimeMs > STALE_AFTER_MS) await fs.rm(dir, { recursive: true, force: true });
    } catch (error) {
      console.error(`uploads: could not sweep ${dir}`, error);
    }
  }
}

export async function discardStaged(dir: string): Promise<void> {
  await fs.rm(dir, { recursive: true, force: true });
}

/**
 * Streams a multipart upload to disk (never into memory whole), hashing it on the way. Fields:
 * `file` (required), `labels` (optional), and text fields.
 */
export async function stageMultipart(request: Request, root: string, maxBytes: number): Promise<StagedUpload> {
  const type = request.headers.get('content-type') ?? '';
  if (!/^multipart\/form-data/i.test(type) || !request.body) {
    throw new ApiError(415, 'unsupported_media_type', 'Send the files as multipart/form-data with a "file" field');
  }
  await sweepStale(root);
  const id = randomUUID();
  const dir = path.join(root, id);
  await fs.mkdir(dir, { recursive: true, mode: 0o700 });

  const fields: Record<string, string> = {};
  const files: Partial<Record<(typeof FILE_FIELDS)[number], StagedFile>> = {};
  const writes: Promise<void>[] = [];
  let tooLarge: string | null = null;
  let refused: string | null = null;

  try {
    const parser = busboy({
      headers: { 'content-type': type },
      limits: { fileSize: maxBytes, files: 2, fields: 10, fieldSize: 64 * 1024 },
    });
    parser.on('field', (name, value) => {
      fields[name] = value;
    });
    parser.on('file', (field, stream, info) => {
      if (!(FILE_FIELDS as readonly string[]).includes(field) || files[field as 'file']) {
        refused = `Unexpected file field "${field}"; send "file" and optionally "labels"`;
        stream.resume();
        return;
      }
      const target = path.join(dir, field);
      const hash = createHash('sha256');
      let bytes = 0;
      stream.on('data', (chunk: Buffer) => {
        hash.update(chunk);
        bytes += chunk.length;
      });
      stream.on('limit', () => {
        tooLarge = info.filename || field;
      });
      const name = path.basename(info.filename || field);
      writes.push(
        pipeline(stream, createWriteStream(target)).then(() => {
          files[field as 'file'] = { path: target, name, bytes, sha256: hash.digest('hex') };
        }),
      );
    });
    await pipeline(Readable.fromWeb(request.body as import('node:stream/web').ReadableStream<Uint8Array>), parser);
    await Promise.all(writes);
  } catch (error) {
    // Let the file writes settle (they fail too when the request does) before removing their folder.
    await Promise.allSettled(writes);
    await discardStaged(dir);
    if (error instanceof ApiError || error instanceof ImportError) throw error;
    throw new ApiError(400, 'invalid_multipart', `The upload could not be read as multipart/form-data: ${(error as Error).message}`);
  }
  if (tooLarge || refused || !files.file) {
    await discardStaged(dir);
    if (tooLarge) {
      throw new ImportError('too_large', `${tooLarge} is larger than the limit of ${maxBytes} bytes (IMPORT_MAX_BYTES)`, tooLarge, [
        { file: tooLarge, byteOffset: maxBytes, message: `the limit is ${maxBytes} bytes` },
      ]);
    }
    throw new ApiError(400, 'invalid_input', refused ?? 'The upload has no "file" field');
  }
  return { id, dir, file: files.file, labels: files.labels, fields };
}

const stagedMetaSchema = z.object({
  workspaceId: z.string(),
  userId: z.string(),
  file: z.object({ path: z.string(), name: z.string(), bytes: z.number(), sha256: z.string() }),
  labels: z.object({ path: z.string(), name: z.string(), bytes: z.number(), sha256: z.string() }).optional(),
  fields: z.record(z.string(), z.string()),
});
export type StagedMeta = z.infer<typeof stagedMetaSchema>;

export async function rememberStaged(upload: StagedUpload, owner: { workspaceId: string; userId: string }): Promise<void> {
  const meta: StagedMeta = { ...owner, file: upload.file, labels: upload.labels, fields: upload.fields };
  await fs.writeFile(path.join(upload.dir, 'meta.json'), JSON.stringify(meta));
}

/**
 * Takes a staged upload for confirmation, once: the rename is atomic, so a second confirm of the
 * same upload (a double click, a retry) finds nothing. Renaming also refreshes the folder's age,
 * so the hourly sweep does not remove it mid-import.
 */
export async function claimStaged(root: string, id: string): Promise<boolean> {
  if (!z.uuid().safeParse(id).success) return false;
  const dir = path.join(root, id);
  try {
    await fs.rename(path.join(dir, 'meta.json'), path.join(dir, 'meta.claimed.json'));
    return true;
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code !== 'ENOENT') console.error(`uploads: could not claim ${id}`, error);
    return false;
  }
}

/** A staged upload awaiting confirmation, or undefined when it is unknown or has been swept. */
export async function recallStaged(root: string, id: string, claimed = false): Promise<(StagedMeta & { dir: string }) | undefined> {
  if (!z.uuid().safeParse(id).success) return undefined;
  const dir = path.join(root, id);
  try {
    const meta = stagedMetaSchema.parse(JSON.parse(await fs.readFile(path.join(dir, claimed ? 'meta.claimed.json' : 'meta.json'), 'utf8')));
    return { ...meta, dir };
  } catch (error) {
    if ((error as NodeJS.ErrnoException).code !== 'ENOENT') console.error(`uploads: unreadable staged upload ${id}`, error);
    return undefined;
  }
}

/** A file already on this machine (the demo seed), described as an upload would be. */
export async function describeLocalFile(filePath: string, name = path.basename(filePath)): Promise<StagedFile> {
  const hash = createHash('sha256');
  let bytes = 0;
  for await (const chunk of createReadStream(filePath)) {
    const buffer = chunk as Buffer;
    hash.update(buffer);
    bytes += buffer.length;
  }
  return { path: filePath, name, bytes, sha256: hash.digest('hex') };
}
