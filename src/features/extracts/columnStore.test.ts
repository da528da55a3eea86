import { describe, expect, it } from 'vitest';
import { ingestExtract } from './extracts';
import { COLUMN_FORMAT, decodeCodes, decodeMissing, decodeNumericValues, encodeColumn, isMissing, missingMask } from './columnStore';
import { chunked } from './testSupport';

async function columns(csv: string) {
  return (await ingestExtract(chunked(csv, 16))).columns;
}

describe('column storage format', () => {
  it('encodes numbers as Float64 little-endian with NaN and a missing bitmap', async () => {
    const [x] = await columns('x\n1.5\nNA\n-2\n0.1\n');
    const encoded = encodeColumn(x);
    expect(encoded).toMatchObject({ format: COLUMN_FORMAT, storage: 'numeric', rowCount: 4, missingCount: 1, levels: null });
    expect(encoded.values.length).toBe(32);
    // IEEE 754 binary64 of 1.5 is 0x3FF8000000000000; little-endian puts 0x00 first and 0x3F last.
    expect([...encoded.values.subarray(0, 8)]).toEqual([0, 0, 0, 0, 0, 0, 0xf8, 0x3f]);
    expect(encoded.values.readDoubleLE(16)).toBe(-2);
    expect(Number.isNaN(encoded.values.readDoubleLE(8))).toBe(true);
    // Row 1 missing: bit 1 of byte 0 -> 0b10.
    expect([...encoded.missing]).toEqual([0b10]);
  });

  it('encodes text as Int32 codes into sorted levels, -1 where missing', async () => {
    const [, band] = await columns('n,band\n1,65-79\n2,18-44\n3,\n4,65-79\n5,80+\n6,18-44\n7,45-64\n8,18-44\n9,80+\n');
    const encoded = encodeColumn(band);
    expect(encoded.storage).toBe('text');
    expect(encoded.levels).toEqual(['18-44', '45-64', '65-79', '80+']);
    const codes = [...new Int32Array(encoded.values.buffer.slice(encoded.values.byteOffset, encoded.values.byteOffset + encoded.values.length))];
    expect(codes).toEqual([2, 0, -1, 2, 3, 0, 1, 0, 3]);
    // Nine rows need two bitmap bytes; row 2 is missing.
    expect([...encoded.missing]).toEqual([0b100, 0]);
  });

  it('round-trips through bytea-like Buffers, zero-copy when aligned and one copy when not', async () => {
    const cols = await columns('v,g\n3.25,a\n,b\n7,\n-1e-3,b\n');
    const numeric = encodeColumn(cols[0]);
    // Encoding views the column's own memory (no copy).
    expect(numeric.values.buffer).toBe(cols[0].kind === 'numeric' ? cols[0].values.buffer : null);
    // What the pg driver hands back: a fresh Buffer (aligned at offset 0) ...
    const aligned = Buffer.from(numeric.values);
    const decoded = decodeNumericValues(aligned, numeric.rowCount);
    expect(decoded.buffer).toBe(aligned.buffer);
    expect([...decoded].map((v) => (Number.isNaN(v) ? 'NaN' : v))).toEqual([3.25, 'NaN', 7, -0.001]);
    // ... or a slice at an odd offset, which costs one copy.
    const odd = Buffer.concat([Buffer.from([9]), numeric.values]).subarray(1);
    const copied = decodeNumericValues(odd, numeric.rowCount);
    expect(copied.buffer).not.toBe(odd.buffer);
    expect([...copied]).toEqual([...decoded]);

    const text = encodeColumn(cols[1]);
    const codes = decodeCodes(Buffer.from(text.values), text.rowCount, text.levels?.length ?? 0);
    expect([...codes].map((c) => (c < 0 ? null : text.levels?.[c]))).toEqual(['a', 'b', null, 'b']);
    const missing = decodeMissing(Buffer.from(text.missing), text.rowCount);
    expect([0, 1, 2, 3].map((row) => isMissing(missing, row))).toEqual([false, false, true, false]);
    expect([...missingMask(missing, 4)]).toEqual([0, 0, 1, 0]);
  });

  it('refuses bytes that do not fit the row count or codes outside the levels', () => {
    expect(() => decodeNumericValues(Buffer.alloc(12), 2)).toThrow(/expected 16 bytes/);
    expect(() => decodeCodes(Buffer.from(new Int32Array([0, 5]).buffer), 2, 3)).toThrow(/code 5/);
    expect(() => decodeMissing(Buffer.alloc(1), 9)).toThrow(/expected 2 bytes/);
  });
});
