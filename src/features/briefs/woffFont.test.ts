/**
 * WOFF 1.0 unpacking (W3C WOFF File Format 1.0): the shipped Noto Sans WOFF becomes an
 * SFNT whose tables are where its directory says, checked on the `head` table's magic
 * number 0x5F0F3CF5 (OpenType specification, "head" table) and its table count.
 */
import { createRequire } from 'node:module';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { woffToSfnt } from './woffFont';

const file = createRequire(import.meta.url).resolve('@fontsource/noto-sans/files/noto-sans-latin-400-normal.woff');

describe('woffToSfnt', () => {
  it('unpacks the shipped Noto Sans into a TrueType font', () => {
    const woff = readFileSync(file);
    const font = woffToSfnt(woff);
    expect(font.readUInt32BE(0)).toBe(woff.readUInt32BE(4)); // the WOFF header's flavor: 0x00010000 for TrueType outlines
    expect(font.readUInt16BE(4)).toBe(woff.readUInt16BE(12));
    const tables = new Map<string, number>();
    for (let i = 0; i < font.readUInt16BE(4); i++) tables.set(font.toString('latin1', 12 + i * 16, 16 + i * 16), font.readUInt32BE(12 + i * 16 + 8));
    expect(font.readUInt32BE(tables.get('head')! + 12)).toBe(0x5f0f3cf5);
  });

  it('refuses a file that is not WOFF', () => {
    expect(() => woffToSfnt(Buffer.from('not a font at all, just some bytes here to pass the length check'))).toThrow(/Not a WOFF/);
  });
});
