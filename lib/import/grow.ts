/**
 * Typed arrays that grow by doubling, so appending n values costs O(n) copies in all and the hot
 * path never builds number[][] (which costs ~10x the memory of a Float32Array for the same values).
 */
export class GrowableFloat32 {
  private data: Float32Array;
  length = 0;

  constructor(initialCapacity = 1024) {
    this.data = new Float32Array(Math.max(16, initialCapacity));
  }

  /** Makes room for `extra` more values and returns the backing array (valid until the next reserve). */
  reserve(extra: number): Float32Array {
    const needed = this.length + extra;
    if (needed > this.data.length) {
      let capacity = this.data.length;
      while (capacity < needed) capacity *= 2;
      const next = new Float32Array(capacity);
      next.set(this.data.subarray(0, this.length));
      this.data = next;
    }
    return this.data;
  }

  push(value: number): void {
    this.reserve(1)[this.length++] = value;
  }

  /** An exact-length copy, so the caller does not hold on to the slack capacity. */
  toArray(): Float32Array {
    return this.data.slice(0, this.length);
  }
}

export class GrowableUint32 {
  private data: Uint32Array;
  length = 0;

  constructor(initialCapacity = 1024) {
    this.data = new Uint32Array(Math.max(16, initialCapacity));
  }

  push(value: number): void {
    if (this.length === this.data.length) {
      const next = new Uint32Array(this.data.length * 2);
      next.set(this.data);
      this.data = next;
    }
    this.data[this.length++] = value;
  }

  /** The filled part, without copying. */
  view(): Uint32Array {
    return this.data.subarray(0, this.length);
  }
}
