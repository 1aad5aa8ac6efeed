import { createReadStream } from 'node:fs';
import { open, stat } from 'node:fs/promises';
import { Transform, Writable, type TransformCallback } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import Papa from 'papaparse';
import { singleError } from './places';
import { ImportError, type ImportLimits, type UploadedFile } from './types';

export const HEAD_BYTES = 64 * 1024;

/** Reads at most `HEAD_BYTES` from the start of a file, for detection and sniffing. */
export async function readHead(path: string, bytes = HEAD_BYTES): Promise<Buffer> {
  const handle = await open(path, 'r');
  try {
    const buffer = Buffer.alloc(bytes);
    const { bytesRead } = await handle.read(buffer, 0, bytes, 0);
    return buffer.subarray(0, bytesRead);
  } finally {
    await handle.close();
  }
}

/** Refuses files over the size limit before anything is read, and empty files. Returns the size. */
export async function checkSize(file: UploadedFile, limits: ImportLimits): Promise<number> {
  const { size } = await stat(file.path);
  if (size > limits.maxBytes) {
    throw singleError('too_large', file.name, `the file is ${formatBytes(size)}, more than the limit of ${formatBytes(limits.maxBytes)}`);
  }
  if (size === 0) throw singleError('empty_file', file.name, 'the file is empty');
  return size;
}

export function formatBytes(bytes: number): string {
  if (bytes >= 1024 * 1024) return `${(bytes / (1024 * 1024)).toFixed(1)} MiB`;
  if (bytes >= 1024) return `${(bytes / 1024).toFixed(1)} KiB`;
  return `${bytes} bytes`;
}

/** Text uploads must be UTF-8: a UTF-16 or UTF-32 byte-order mark is refused up front, with the fix. */
export function checkTextHead(head: Uint8Array, file: string): void {
  const b0 = head[0];
  const b1 = head[1];
  const utf16 = (b0 === 0xff && b1 === 0xfe) || (b0 === 0xfe && b1 === 0xff);
  const utf32be = b0 === 0x00 && b1 === 0x00 && head[2] === 0xfe && head[3] === 0xff;
  if (utf16 || utf32be) {
    throw singleError('bad_encoding', file, `the file is ${utf16 ? 'UTF-16' : 'UTF-32'} encoded; save it as UTF-8 and upload it again`, {
      byteOffset: 0,
      message: `${utf16 ? 'UTF-16' : 'UTF-32'} byte-order mark`,
    });
  }
}

/**
 * Offset of the first byte that starts an invalid UTF-8 sequence (the WHATWG decoder's rules:
 * no overlong forms, no surrogates, nothing above U+10FFFF), or -1. With `final` false an
 * incomplete sequence at the very end is not an error, since the next chunk may complete it.
 */
export function firstInvalidUtf8(bytes: Uint8Array, final: boolean): number {
  const n = bytes.length;
  let i = 0;
  while (i < n) {
    const b = bytes[i] ?? 0;
    if (b < 0x80) {
      i += 1;
      continue;
    }
    let need: number;
    let lo = 0x80;
    let hi = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) need = 1;
    else if (b === 0xe0) (need = 2), (lo = 0xa0);
    else if ((b >= 0xe1 && b <= 0xec) || b === 0xee || b === 0xef) need = 2;
    else if (b === 0xed) (need = 2), (hi = 0x9f);
    else if (b === 0xf0) (need = 3), (lo = 0x90);
    else if (b >= 0xf1 && b <= 0xf3) need = 3;
    else if (b === 0xf4) (need = 3), (hi = 0x8f);
    else return i;
    for (let j = 1; j <= need; j++) {
      if (i + j >= n) return final ? i : -1;
      const c = bytes[i + j] ?? 0;
      if (j === 1 ? c < lo || c > hi : c < 0x80 || c > 0xbf) return i;
    }
    i += need + 1;
  }
  return -1;
}

/** Length of an incomplete multi-byte sequence at the end of `bytes` (0..3). */
function incompleteTail(bytes: Uint8Array): number {
  const n = bytes.length;
  for (let back = 1; back <= Math.min(3, n); back++) {
    const b = bytes[n - back] ?? 0;
    if ((b & 0xc0) === 0x80) continue; // continuation byte: keep looking for the lead
    const length = b >= 0xf0 ? 4 : b >= 0xe0 ? 3 : b >= 0xc0 ? 2 : 1;
    return length > back ? back : 0;
  }
  return 0;
}

export function badEncodingError(file: string, byteOffset: number): ImportError {
  return singleError('bad_encoding', file, 'the file is not valid UTF-8; save it as UTF-8 and upload it again', {
    byteOffset,
    message: 'invalid UTF-8 byte sequence',
  });
}

/**
 * Decodes UTF-8 chunk by chunk with the native decoder (fatal, so a bad byte is an error rather
 * than a silent U+FFFD) and strips a UTF-8 BOM. Only on failure does it rescan in JavaScript, to
 * name the byte offset.
 */
class Utf8DecodeStream extends Transform {
  private readonly decoder = new TextDecoder('utf-8', { fatal: true });
  private offset = 0;
  private tail: Uint8Array = new Uint8Array(0);

  constructor(private readonly file: string) {
    super({ readableObjectMode: true });
  }

  override _transform(chunk: Buffer, _encoding: BufferEncoding, callback: TransformCallback): void {
    try {
      const text = this.decoder.decode(chunk, { stream: true });
      this.offset += chunk.length;
      this.tail = chunk.subarray(chunk.length - incompleteTail(chunk));
      if (text.length > 0) this.push(text);
      callback();
    } catch {
      callback(this.locate(chunk, false));
    }
  }

  override _flush(callback: TransformCallback): void {
    try {
      const text = this.decoder.decode();
      if (text.length > 0) this.push(text);
      callback();
    } catch {
      callback(this.locate(new Uint8Array(0), true));
    }
  }

  private locate(chunk: Uint8Array, final: boolean): ImportError {
    const joined = Buffer.concat([this.tail, chunk]);
    const at = firstInvalidUtf8(joined, final || chunk.length === 0);
    const start = this.offset - this.tail.length;
    return badEncodingError(this.file, start + Math.max(0, at));
  }
}

/** Decodes a whole buffer (JSON), naming the byte offset of bad UTF-8. */
export function decodeUtf8(bytes: Uint8Array, file: string): string {
  checkTextHead(bytes, file);
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    throw badEncodingError(file, Math.max(0, firstInvalidUtf8(bytes, true)));
  }
}

/**
 * Streams a delimited file through papaparse row by row. `onRow` gets the fields and the 1-based
 * line, counting the header; a line here is a record, which is the physical line unless a quoted
 * field spans lines. Blank lines are skipped but counted. An error thrown by `onRow` stops the read
 * and is rethrown.
 */
export async function streamRows(file: UploadedFile, delimiter: string, onRow: (row: string[], line: number) => void): Promise<void> {
  const source = createReadStream(file.path, { highWaterMark: 1 << 20 });
  const decoder = new Utf8DecodeStream(file.name);
  const parser = Papa.parse(Papa.NODE_STREAM_INPUT, { delimiter, header: false, dynamicTyping: false, skipEmptyLines: false });
  let line = 0;
  const sink = new Writable({
    objectMode: true,
    highWaterMark: 512,
    write(row: string[], _encoding, callback) {
      line += 1;
      if (row.length === 1 && row[0] === '') {
        callback();
        return;
      }
      try {
        onRow(row, line);
        callback();
      } catch (error) {
        callback(error instanceof Error ? error : new Error(String(error)));
      }
    },
  });
  try {
    await pipeline(source, decoder, parser, sink);
  } catch (error) {
    // papaparse keeps an unfinished line as one string; past V8's string limit that is a RangeError
    if (error instanceof RangeError) {
      throw singleError('line_too_long', file.name, `a line near line ${line + 1} is too long to read (hundreds of MiB without a line break); check the line endings and quotes`, {
        line: line + 1,
        message: 'line too long',
      });
    }
    throw error;
  }
}

export const DELIMITERS = [',', '\t', ';'] as const;
export type Delimiter = (typeof DELIMITERS)[number];

/**
 * Rows of the head of a delimited file, for sniffing: decoded leniently (detection must not fail on a
 * bad byte; the full read reports it), BOM stripped, and the last line dropped when the head was cut
 * mid-line (kept if it is the only one, e.g. a very wide draws header).
 */
export function sniffRows(head: Buffer, delimiter?: Delimiter, maxRows = 200): { rows: string[][]; delimiter: Delimiter } {
  let text = new TextDecoder('utf-8').decode(head);
  if (head.length >= HEAD_BYTES) {
    const cut = Math.max(text.lastIndexOf('\n'), 0);
    if (cut > 0) text = text.slice(0, cut);
  }
  // "#" comment lines (CmdStan's) would only confuse the delimiter guess; sniffing never needs them
  if (text.includes('\n#') || text.startsWith('#')) {
    text = text
      .split('\n')
      .filter((line) => !line.startsWith('#'))
      .join('\n');
  }
  if (delimiter) return { rows: parseSample(text, delimiter, maxRows).rows, delimiter };
  return guessDelimiter(text, maxRows);
}

function parseSample(text: string, delimiter: Delimiter, maxRows: number): { rows: string[][]; quoteErrors: number } {
  const result = Papa.parse<string[]>(text, { preview: maxRows, skipEmptyLines: true, dynamicTyping: false, delimiter });
  return { rows: result.data, quoteErrors: result.errors.filter((error) => error.type === 'Quotes').length };
}

/**
 * Papa Parse's own guess ignores quoting errors: `"a,b";0` made it choose "," and read the whole file
 * as one broken row. Here every candidate parses the sample, and the one that reads it without quote
 * errors into the most rows of one width (≥ 2 columns) wins; ties go to the order of DELIMITERS.
 */
function guessDelimiter(text: string, maxRows: number): { rows: string[][]; delimiter: Delimiter } {
  let best: { rows: string[][]; delimiter: Delimiter; score: readonly number[] } | null = null;
  for (const candidate of DELIMITERS) {
    const { rows, quoteErrors } = parseSample(text, candidate, maxRows);
    const widths = new Map<number, number>();
    for (const row of rows) widths.set(row.length, (widths.get(row.length) ?? 0) + 1);
    let modalWidth = 0;
    let modalCount = 0;
    for (const [width, count] of widths) {
      if (count > modalCount || (count === modalCount && width > modalWidth)) [modalWidth, modalCount] = [width, count];
    }
    const score = [-quoteErrors, modalWidth >= 2 ? 1 : 0, modalCount, modalWidth];
    if (!best || isBetterScore(score, best.score)) best = { rows, delimiter: candidate, score };
  }
  return best ? { rows: best.rows, delimiter: best.delimiter } : { rows: [], delimiter: ',' };
}

function isBetterScore(score: readonly number[], than: readonly number[]): boolean {
  for (let index = 0; index < score.length; index++) {
    const a = score[index] ?? 0;
    const b = than[index] ?? 0;
    if (a !== b) return a > b;
  }
  return false;
}

const NON_FINITE_TOKENS = new Set(['nan', '-nan', 'inf', '-inf', '+inf', 'infinity', '-infinity', '+infinity', 'na', 'n/a', 'null', 'none', '#n/a']);

/**
 * The finite number a cell holds, or NaN when it holds none. Number() alone is too lenient: it reads
 * "" and "  " as 0 and "0x1f" as 31. (A hand-written fast path for short decimals was measured and
 * gained too little to justify it: V8's Number() is ~100 ns for 9 digits, ~250 ns for 17.)
 */
export function toFinite(cell: string): number {
  const value = Number(cell);
  if (!Number.isFinite(value)) return Number.NaN;
  if (value === 0 && cell.trim() === '') return Number.NaN;
  const c0 = cell.charCodeAt(0);
  if (c0 === 48 || c0 === 32 || c0 === 9 || c0 === 43 || c0 === 45) {
    // 0x, 0o, 0b prefixes, possibly after blanks (Number refuses them after a sign, so no sign here)
    const trimmed = c0 === 48 ? cell : cell.trimStart();
    const c1 = trimmed.charCodeAt(1);
    if (trimmed.charCodeAt(0) === 48 && (c1 === 120 || c1 === 88 || c1 === 111 || c1 === 79 || c1 === 98 || c1 === 66)) return Number.NaN;
  }
  return value;
}

/** Looks like a number as a fitting tool would write one, including its spellings of missing and non-finite values. */
export function isNumberLike(cell: string): boolean {
  return !Number.isNaN(toFinite(cell)) || NON_FINITE_TOKENS.has(cell.trim().toLowerCase());
}

/** Header names compared loosely: "Entity ID", "entity_id" and ".entity" all become "entityid"/"entity". */
export function normalizeName(name: string): string {
  return name.trim().toLowerCase().replace(/[^a-z0-9]/g, '');
}
