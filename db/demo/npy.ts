import { promises as fs } from 'node:fs';

/** Writes a little-endian float32 C-order .npy (format version 1.0), as numpy.save does. */
export async function writeFloat32Npy(path: string, data: Float32Array, shape: number[]): Promise<void> {
  const dict = `{'descr': '<f4', 'fortran_order': False, 'shape': (${shape.join(', ')}${shape.length === 1 ? ',' : ''}), }`;
  // Magic (6) + version (2) + header length (2) + header, padded with spaces to a multiple of 64, ending in \n.
  const unpadded = 10 + dict.length + 1;
  const header = dict + ' '.repeat((64 - (unpadded % 64)) % 64) + '\n';
  const prefix = Buffer.alloc(10);
  prefix.write('\x93NUMPY', 0, 'latin1');
  prefix[6] = 1;
  prefix[7] = 0;
  prefix.writeUInt16LE(header.length, 8);
  await fs.writeFile(path, Buffer.concat([prefix, Buffer.from(header, 'latin1'), Buffer.from(data.buffer, data.byteOffset, data.byteLength)]));
}
