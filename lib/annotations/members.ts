/** Annotation membership as sorted, unique uint32 entity indices, stored little-endian in one bytea. */

export function sortedUnique(indices: Iterable<number>): Uint32Array {
  const out = Uint32Array.from(indices);
  out.sort();
  let w = 0;
  for (let r = 0; r < out.length; r += 1) {
    const v = out[r] as number;
    if (w === 0 || v !== out[w - 1]) out[w++] = v;
  }
  return out.slice(0, w);
}

export function membersToBytes(members: Uint32Array): Buffer {
  const buffer = Buffer.alloc(members.length * 4);
  for (let i = 0; i < members.length; i += 1) buffer.writeUInt32LE(members[i] as number, i * 4);
  return buffer;
}

export function membersFromBytes(data: Buffer): Uint32Array {
  const out = new Uint32Array(data.length >>> 2);
  for (let i = 0; i < out.length; i += 1) out[i] = data.readUInt32LE(i * 4);
  return out;
}

/** Sorted-merge union and difference: both inputs sorted and unique. */
export function unionSorted(a: Uint32Array, b: Uint32Array): Uint32Array {
  const out = new Uint32Array(a.length + b.length);
  let i = 0;
  let j = 0;
  let w = 0;
  while (i < a.length || j < b.length) {
    const x = i < a.length ? (a[i] as number) : Infinity;
    const y = j < b.length ? (b[j] as number) : Infinity;
    if (x === y) {
      out[w++] = x;
      i += 1;
      j += 1;
    } else if (x < y) {
      out[w++] = x;
      i += 1;
    } else {
      out[w++] = y;
      j += 1;
    }
  }
  return out.slice(0, w);
}

export function differenceSorted(a: Uint32Array, b: Uint32Array): Uint32Array {
  const out = new Uint32Array(a.length);
  let j = 0;
  let w = 0;
  for (let i = 0; i < a.length; i += 1) {
    const x = a[i] as number;
    while (j < b.length && (b[j] as number) < x) j += 1;
    if (j >= b.length || b[j] !== x) out[w++] = x;
  }
  return out.slice(0, w);
}

/** Counts of members added and removed between two memberships. */
export function membershipDelta(before: Uint32Array, after: Uint32Array): { added: Uint32Array; removed: Uint32Array } {
  return { added: differenceSorted(after, before), removed: differenceSorted(before, after) };
}
