/**
 * The level dictionary of text columns: byte strings to codes without creating a string
 * per field, with the growth helpers the column arrays share.
 */

const textDecoder = new TextDecoder('utf-8');

export function decode(bytes: Uint8Array, start: number, end: number): string {
  return textDecoder.decode(bytes.subarray(start, end));
}

export function growInt32(old: Int32Array, capacity: number, fill: number): Int32Array<ArrayBuffer> {
  const grown = new Int32Array(capacity);
  grown.set(old);
  grown.fill(fill, old.length);
  return grown;
}

export function growBytes(old: Uint8Array, capacity: number): Uint8Array<ArrayBuffer> {
  const grown = new Uint8Array(capacity);
  grown.set(old);
  return grown;
}
/**
 * Open-addressing hash table from byte strings to level codes (FNV-1a hash, linear
 * probing), with the level bytes in one arena.
 */
export class ByteDictionary {
  private table: Int32Array = new Int32Array(64).fill(-1);
  private mask = 63;
  private arena = new Uint8Array(1024);
  private arenaLength = 0;
  private starts = new Int32Array(16);
  private lengths = new Int32Array(16);
  private hashes = new Int32Array(16);
  size = 0;

  /** Code of the bytes, or -1 when they are not in the dictionary. */
  find(bytes: Uint8Array, start: number, end: number, hash: number): number {
    const length = end - start;
    let slot = hash & this.mask;
    for (;;) {
      const code = this.table[slot];
      if (code < 0) return -1;
      if (this.hashes[code] === hash && this.lengths[code] === length) {
        const at = this.starts[code];
        let same = true;
        for (let k = 0; k < length; k++) {
          if (this.arena[at + k] !== bytes[start + k]) {
            same = false;
            break;
          }
        }
        if (same) return code;
      }
      slot = (slot + 1) & this.mask;
    }
  }

  /** Adds bytes known to be absent; returns their code. */
  add(bytes: Uint8Array, start: number, end: number, hash: number): number {
    const code = this.size++;
    if (code === this.starts.length) {
      const capacity = code * 2;
      this.starts = growInt32(this.starts, capacity, 0);
      this.lengths = growInt32(this.lengths, capacity, 0);
      this.hashes = growInt32(this.hashes, capacity, 0);
    }
    const length = end - start;
    if (this.arenaLength + length > this.arena.length) {
      this.arena = growBytes(this.arena, Math.max(this.arena.length * 2, this.arenaLength + length));
    }
    this.arena.set(bytes.subarray(start, end), this.arenaLength);
    this.starts[code] = this.arenaLength;
    this.lengths[code] = length;
    this.hashes[code] = hash;
    this.arenaLength += length;
    if (this.size * 2 > this.table.length) this.rehash();
    else this.place(code, hash);
    return code;
  }

  private place(code: number, hash: number): void {
    let slot = hash & this.mask;
    while (this.table[slot] >= 0) slot = (slot + 1) & this.mask;
    this.table[slot] = code;
  }

  private rehash(): void {
    const size = this.table.length * 2;
    this.table = new Int32Array(size).fill(-1);
    this.mask = size - 1;
    for (let code = 0; code < this.size; code++) this.place(code, this.hashes[code]);
  }

  /** The level strings, in code order. */
  strings(): string[] {
    const out = new Array<string>(this.size);
    for (let code = 0; code < this.size; code++) {
      out[code] = decode(this.arena, this.starts[code], this.starts[code] + this.lengths[code]);
    }
    return out;
  }
}

/** FNV-1a hash of a byte range (31 bits). */
export function hashBytes(bytes: Uint8Array, start: number, end: number): number {
  let h = 0x811c9dc5;
  for (let k = start; k < end; k++) h = Math.imul(h ^ bytes[k], 0x01000193);
  return h & 0x7fffffff;
}
