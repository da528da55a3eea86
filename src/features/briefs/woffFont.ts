/**
 * WOFF 1.0 to an OpenType/TrueType font in memory (W3C WOFF File Format 1.0, sections 4
 * and 5: a header, a table directory, and each table zlib-compressed when that makes it
 * smaller). pdfkit reads WOFF itself, but unpacks it again for every document; the PDF
 * renderer converts each shipped font once and hands pdfkit the plain font.
 */
import { readFileSync } from 'node:fs';
import { inflateSync } from 'node:zlib';

const WOFF_SIGNATURE = 0x774f4646; // 'wOFF'

/** The SFNT font inside a WOFF file; throws on anything that is not WOFF 1.0. */
export function woffToSfnt(woff: Buffer): Buffer {
  if (woff.length < 44 || woff.readUInt32BE(0) !== WOFF_SIGNATURE) throw new Error('Not a WOFF 1.0 font file.');
  const flavor = woff.readUInt32BE(4);
  const numTables = woff.readUInt16BE(12);
  const tables = Array.from({ length: numTables }, (_, index) => {
    const entry = 44 + index * 20;
    const offset = woff.readUInt32BE(entry + 4);
    const compressedLength = woff.readUInt32BE(entry + 8);
    const originalLength = woff.readUInt32BE(entry + 12);
    const stored = woff.subarray(offset, offset + compressedLength);
    const data = compressedLength < originalLength ? inflateSync(stored) : stored;
    if (data.length !== originalLength) throw new Error('A table of the WOFF font has the wrong length.');
    return { tag: woff.readUInt32BE(entry), checksum: woff.readUInt32BE(entry + 16), data };
  });
  // The SFNT header's binary-search fields (OpenType specification, "Table Directory").
  const entrySelector = Math.floor(Math.log2(numTables));
  const searchRange = 2 ** entrySelector * 16;
  const directoryLength = 12 + numTables * 16;
  const padded = (length: number) => (length + 3) & ~3;
  const out = Buffer.alloc(tables.reduce((size, table) => size + padded(table.data.length), directoryLength));
  out.writeUInt32BE(flavor, 0);
  out.writeUInt16BE(numTables, 4);
  out.writeUInt16BE(searchRange, 6);
  out.writeUInt16BE(entrySelector, 8);
  out.writeUInt16BE(numTables * 16 - searchRange, 10);
  let offset = directoryLength;
  tables.forEach((table, index) => {
    const entry = 12 + index * 16;
    out.writeUInt32BE(table.tag, entry);
    out.writeUInt32BE(table.checksum, entry + 4);
    out.writeUInt32BE(offset, entry + 8);
    out.writeUInt32BE(table.data.length, entry + 12);
    table.data.copy(out, offset);
    offset += padded(table.data.length);
  });
  return out;
}

const cache = new Map<string, Buffer>();

/** A shipped WOFF file as a plain font, converted once per process. */
export function fontFromWoff(file: string): Buffer {
  let font = cache.get(file);
  if (!font) {
    font = woffToSfnt(readFileSync(file));
    cache.set(file, font);
  }
  return font;
}
