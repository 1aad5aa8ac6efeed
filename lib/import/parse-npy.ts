import { readFile } from 'node:fs/promises';
import { notFinite, PlaceCollector, singleError } from './places';
import type { ImportLimits, UploadedFile } from './types';

export interface NpyResult {
  /** (N, K) or (D, N, K). */
  shape: number[];
  /** C order, float32. */
  data: Float32Array;
}

const MAGIC = Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59]);

interface NpyHeader {
  descr: string;
  fortranOrder: boolean;
  shape: number[];
  dataOffset: number;
}

/**
 * The .npy header (format versions 1.0, 2.0 and 3.0): magic "\x93NUMPY", major and minor version
 * bytes, header length (uint16 LE in v1, uint32 LE in v2/v3), then a Python dict literal such as
 * {'descr': '<f4', 'fortran_order': False, 'shape': (120, 8), }.
 */
function readHeader(bytes: Buffer, file: string): NpyHeader {
  const bad = (summary: string, byteOffset: number, message: string): Error => singleError('npy_bad_header', file, summary, { byteOffset, message });
  if (bytes.length < 10 || !bytes.subarray(0, 6).equals(MAGIC)) {
    throw bad('the file does not start with the .npy magic bytes "\\x93NUMPY"; save the array with numpy.save', 0, 'wrong magic');
  }
  const major = bytes[6] ?? 0;
  if (major < 1 || major > 3) throw bad(`the .npy format version ${major}.${bytes[7] ?? 0} is not one this reader knows (1.0, 2.0, 3.0)`, 6, `version ${major}`);
  const lengthBytes = major === 1 ? 2 : 4;
  if (bytes.length < 8 + lengthBytes) throw bad('the .npy header is cut short', bytes.length, 'file ends inside the header');
  const headerLength = major === 1 ? bytes.readUInt16LE(8) : bytes.readUInt32LE(8);
  const start = 8 + lengthBytes;
  const dataOffset = start + headerLength;
  if (dataOffset > bytes.length) throw bad('the .npy header is cut short', bytes.length, `header says ${headerLength} bytes`);
  const text = bytes.subarray(start, dataOffset).toString(major === 3 ? 'utf8' : 'latin1');
  const descr = /['"]descr['"]\s*:\s*['"]([^'"]*)['"]/.exec(text)?.[1];
  if (descr === undefined) {
    if (/['"]descr['"]\s*:\s*\[/.test(text)) {
      throw singleError('npy_unsupported_dtype', file, 'the array has a structured dtype; save a plain float32 or float64 array', { byteOffset: start, message: 'structured dtype' });
    }
    throw bad("the .npy header has no 'descr' entry", start, 'no descr');
  }
  const fortran = /['"]fortran_order['"]\s*:\s*(True|False)/.exec(text)?.[1];
  if (fortran === undefined) throw bad("the .npy header has no 'fortran_order' entry", start, 'no fortran_order');
  const shapeText = /['"]shape['"]\s*:\s*\(([^)]*)\)/.exec(text)?.[1];
  if (shapeText === undefined) throw bad("the .npy header has no 'shape' entry", start, 'no shape');
  const parts = shapeText
    .split(',')
    .map((part) => part.trim())
    .filter((part) => part !== '');
  if (!parts.every((part) => /^\d+L?$/.test(part))) throw bad(`the .npy shape (${shapeText}) is not a tuple of sizes`, start, 'bad shape');
  return { descr, fortranOrder: fortran === 'True', shape: parts.map((part) => Number.parseInt(part, 10)), dataOffset };
}

const DTYPE_NAMES: Record<string, string> = { f2: 'float16', i1: 'int8', i2: 'int16', i4: 'int32', i8: 'int64', u1: 'uint8', u2: 'uint16', u4: 'uint32', u8: 'uint64', b1: 'bool', c8: 'complex64', c16: 'complex128', O: 'object' };

/**
 * NumPy .npy, float32 or float64 little-endian, C or Fortran order, shape (N, K) or (D, N, K).
 * float64 is rounded to float32, the precision factors are stored in. The file is read whole: unlike
 * text there is no string-length limit, and the size was checked against the limit beforehand.
 */
export async function parseNpy(file: UploadedFile, limits: ImportLimits): Promise<NpyResult> {
  const bytes = await readFile(file.path);
  const header = readHeader(bytes, file.name);
  const { descr, shape, dataOffset } = header;
  const byteOrder = descr.charAt(0);
  const kind = descr.slice(1);
  if (byteOrder === '>') {
    throw singleError('npy_unsupported_dtype', file.name, `the array is big-endian (${descr}); save it little-endian, e.g. arr.astype('<f4')`, { byteOffset: 0, message: `dtype ${descr}` });
  }
  if ((byteOrder !== '<' && byteOrder !== '=') || (kind !== 'f4' && kind !== 'f8')) {
    const name = DTYPE_NAMES[kind] ?? descr;
    throw singleError('npy_unsupported_dtype', file.name, `the array's dtype is ${name} (${descr}); only float32 ('<f4') and float64 ('<f8') are read, e.g. save arr.astype('float32')`, {
      byteOffset: 0,
      message: `dtype ${descr}`,
    });
  }
  if (shape.length !== 2 && shape.length !== 3) {
    throw singleError('npy_bad_header', file.name, `the array has shape (${shape.join(', ')}); it must be 2-D (entities, dimensions) or 3-D (draws, entities, dimensions)`, {
      byteOffset: 0,
      message: `${shape.length}-D array`,
    });
  }
  const [draws, rows, dims] = shape.length === 3 ? (shape as [number, number, number]) : ([1, ...shape] as [number, number, number]);
  if (draws * rows * dims === 0) throw singleError('empty_file', file.name, `the array has shape (${shape.join(', ')}) and holds no values`);
  if (rows > limits.maxRows) throw singleError('too_many_rows', file.name, `the array has ${rows} entities, more than the limit of ${limits.maxRows}`);
  if (dims > limits.maxDims) throw singleError('too_many_dims', file.name, `the array has ${dims} dimensions, more than the limit of ${limits.maxDims}`);
  if (draws > limits.maxDraws) throw singleError('too_many_draws', file.name, `the array has ${draws} draws, more than the limit of ${limits.maxDraws}`);
  const itemSize = kind === 'f4' ? 4 : 8;
  const count = draws * rows * dims;
  const expected = count * itemSize;
  const actual = bytes.length - dataOffset;
  if (actual !== expected) {
    throw singleError(
      'npy_truncated',
      file.name,
      `the array data is ${actual} bytes but shape (${shape.join(', ')}) of ${kind === 'f4' ? 'float32' : 'float64'} needs ${expected}; the file is ${actual < expected ? 'cut short' : 'longer than its header says'}`,
      { byteOffset: dataOffset + Math.min(actual, expected), message: actual < expected ? 'data ends here' : 'unexpected bytes from here' },
    );
  }

  // DataView reads little-endian whatever the host and whatever the alignment of the data offset
  const view = new DataView(bytes.buffer, bytes.byteOffset + dataOffset, expected);
  const read = itemSize === 4 ? (at: number) => view.getFloat32(at * 4, true) : (at: number) => view.getFloat64(at * 8, true);
  const data = new Float32Array(count);
  const invalid = new PlaceCollector('invalid_value', file.name);
  // Source position `at` of C-order element [d, i, k]; Fortran order reverses the axes' strides.
  const sizes = shape.length === 3 ? [draws, rows, dims] : [rows, dims];
  const at = (d: number, i: number, k: number): number => (header.fortranOrder ? (shape.length === 3 ? d + draws * (i + rows * k) : i + rows * k) : (d * rows + i) * dims + k);
  let out = 0;
  for (let d = 0; d < draws; d++) {
    for (let i = 0; i < rows; i++) {
      for (let k = 0; k < dims; k++) {
        const source = at(d, i, k);
        const value = Math.fround(read(source));
        if (!Number.isFinite(value)) {
          if (!invalid.wants) invalid.tally();
          else {
            const index = shape.length === 3 ? `[${d}, ${i}, ${k}]` : `[${i}, ${k}]`;
            invalid.add({ index, byteOffset: dataOffset + source * itemSize, message: Number.isNaN(value) ? 'NaN' : itemSize === 8 && Number.isFinite(read(source)) ? 'too large for float32' : 'infinite' });
          }
        }
        data[out++] = value;
      }
    }
  }
  if (invalid.any) throw invalid.toError(`${notFinite(invalid.count, 'value', 'float32 number')} (index is 0-based, as in NumPy; shape ${sizes.join('×')})`);
  return { shape, data };
}
