import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { CsvChunkReader, firstInvalidUtf8Offset, formatBytes, readCsv } from './csvReader';
import { ExtractRefusalError } from './extractRefusal';
import { chunked, RecordingSink } from './testSupport';

async function parse(input: string | Uint8Array, chunkSize = 65536, options = {}) {
  const sink = new RecordingSink();
  const summary = await readCsv(chunked(input, chunkSize), sink, options);
  return { sink, summary };
}

async function refusal(input: string | Uint8Array, chunkSize = 65536, options = {}): Promise<ExtractRefusalError> {
  try {
    await parse(input, chunkSize, options);
  } catch (error) {
    if (error instanceof ExtractRefusalError) return error;
    throw error;
  }
  throw new Error('expected the reader to refuse the input');
}

const bytes = (...parts: (string | number[])[]): Uint8Array =>
  Buffer.concat(parts.map((p) => (typeof p === 'string' ? Buffer.from(p, 'utf8') : Buffer.from(p))));

describe('refusals of bad input', () => {
  it('refuses an empty file, a BOM alone and blank lines alone', async () => {
    for (const input of ['', '\uFEFF', '\n\n\r\n', '   \n ']) {
      const error = await refusal(input);
      expect(error.code).toBe('empty-file');
      expect(error.message).toMatch(/empty/);
    }
  });

  it('refuses a header without data rows, with or without a final line break', async () => {
    for (const input of ['a,b\n', 'a,b', 'a,b\r\n\r\n\n']) {
      const error = await refusal(input);
      expect(error.code).toBe('header-only');
      expect(error.message).toBe('The file has a header row but no data rows below it.');
    }
  });

  it('refuses a binary file renamed .csv (a PNG: its 8-byte signature is followed by NUL bytes)', async () => {
    // PNG signature and IHDR length field, ISO/IEC 15948:2004 section 5.2 and 5.3.
    const png = bytes([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0x00, 0x00, 0x00, 0x0d, 0x49, 0x48, 0x44, 0x52]);
    const error = await refusal(png);
    expect(error.code).toBe('not-text');
    expect(error.message).toMatch(/binary data \(a NUL byte\)/);
    // The signature holds CR LF (one line break) and later a lone LF: the NUL is on line 3.
    expect(error.line).toBe(3);
  });

  it('names spreadsheet workbooks and UTF-16 files in the message', async () => {
    // An .xlsx file is a ZIP archive: local file header signature PK\x03\x04 (APPNOTE.TXT 4.3.7).
    const xlsx = bytes([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x06, 0x00]);
    expect((await refusal(xlsx)).message).toMatch(/spreadsheet workbook/);
    const utf16 = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from('a,b\n1,2\n', 'utf16le')]);
    const error = await refusal(utf16);
    expect(error.code).toBe('not-text');
    expect(error.message).toMatch(/UTF-16/);
  });

  it('refuses invalid UTF-8 and reports its line, whatever the chunking', async () => {
    // "café" in Latin-1: 0xE9 is not followed by a continuation byte (Unicode 15, table 3-7).
    const latin1 = bytes('site,label\n', 'A,ok\n', 'B,caf', [0xe9], '\n');
    for (const size of [1, 3, 65536]) {
      const error = await refusal(latin1, size);
      expect(error.code).toBe('invalid-utf8');
      expect(error.line).toBe(3);
      expect(error.message).toMatch(/^Line 3: the file is not valid UTF-8/);
    }
  });

  it('refuses overlong forms, surrogates and a character cut off at the end of the file', async () => {
    expect((await refusal(bytes('a\n', [0xc0, 0xaf], '\n'))).code).toBe('invalid-utf8');
    expect((await refusal(bytes('a\n', [0xed, 0xa0, 0x80], '\n'))).code).toBe('invalid-utf8');
    const cut = await refusal(bytes('a\nx', [0xc3]), 1);
    expect(cut.code).toBe('invalid-utf8');
    expect(cut.message).toMatch(/ends in the middle of a multi-byte character/);
  });

  it('refuses ragged rows and reports the first bad physical line', async () => {
    const short = await refusal('a,b,c\n1,2,3\n4,5,6\n7,8\n9,10\n');
    expect(short.code).toBe('ragged-row');
    expect(short.line).toBe(4);
    expect(short.message).toBe('Line 4: this row has 2 fields but the header has 3. Every row must have as many fields as the header.');
    const long = await refusal('a,b\n1,2\n3,4,5\n');
    expect(long.line).toBe(3);
    expect(long.message).toMatch(/at least 3 fields but the header has 2/);
  });

  it('counts the lines inside quoted fields when numbering a ragged row', async () => {
    // Line 2 opens a quoted field that ends on line 4; the ragged record starts on line 5.
    const input = 'a,b\n1,"x\ny\nz"\n2\n';
    for (const size of [1, 2, 65536]) {
      const error = await refusal(input, size);
      expect(error.code).toBe('ragged-row');
      expect(error.line).toBe(5);
    }
  });

  it('refuses an unterminated quote and reports the line where it opened', async () => {
    const input = 'a,b\n1,2\n3,"never closed\n4,5\n6,7\n';
    for (const size of [1, 65536]) {
      const error = await refusal(input, size);
      expect(error.code).toBe('unterminated-quote');
      expect(error.line).toBe(3);
      expect(error.message).toMatch(/^Line 3: a quoted field opens here and is never closed/);
    }
  });

  it('stops at the field-size limit when a quote is never closed in a large file', async () => {
    const input = `a,b\n1,"${'x'.repeat(5000)}`;
    const error = await refusal(input, 100, { maxFieldBytes: 1000 });
    expect(error.code).toBe('unterminated-quote');
    expect(error.line).toBe(2);
  });

  it('refuses text between a closing quote and the next delimiter', async () => {
    const error = await refusal('a,b\n"x"y,2\n');
    expect(error.code).toBe('bad-quoting');
    expect(error.line).toBe(2);
  });

  it('refuses duplicate column names, ignoring case', async () => {
    const same = await refusal('id,age,age\n1,2,3\n');
    expect(same.code).toBe('duplicate-column');
    expect(same.message).toBe('Line 1: columns 2 and 3 have the same name, "age" (names are compared ignoring case). Column names must be unique.');
    const cased = await refusal('Site,SITE\n1,2\n');
    expect(cased.code).toBe('duplicate-column');
    expect(cased.message).toMatch(/"Site" and "SITE"/);
  });

  it('refuses empty column names (including spaces only and a trailing delimiter)', async () => {
    for (const [input, column] of [['a,,c\n1,2,3\n', 2], ['a, ,c\n1,2,3\n', 2], ['a,b,\n1,2,3\n', 3]] as const) {
      const error = await refusal(input);
      expect(error.code).toBe('empty-column-name');
      expect(error.message).toBe(`Line 1: column ${column} of the header has no name. Every column needs a name.`);
    }
  });

  it('refuses a file over the size limit while streaming, without reading the rest', async () => {
    let pulled = 0;
    let closed = false;
    const row = Buffer.from('1,2,3,4,5,6,7,8,9\n'); // 18 bytes
    async function* upload(): AsyncGenerator<Uint8Array> {
      try {
        yield Buffer.from('a,b,c,d,e,f,g,h,i\n');
        for (let i = 0; i < 10_000; i++) {
          pulled++;
          yield row;
        }
      } finally {
        closed = true;
      }
    }
    const sink = new RecordingSink();
    // Limit 1,000 bytes: the header (18) plus 54 rows (972) fit; the 55th row makes 1,008.
    const error = await readCsv(upload(), sink, { maxBytes: 1000 }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ExtractRefusalError);
    expect((error as ExtractRefusalError).code).toBe('too-large');
    expect((error as ExtractRefusalError).message).toBe('The file is larger than the limit of 1000 bytes; reading stopped at 1008 bytes.');
    expect(pulled).toBe(55);
    expect(closed).toBe(true);
    expect(sink.records.length).toBe(54);
  });

  it('refuses a cancelled upload', async () => {
    const controller = new AbortController();
    controller.abort();
    const error = await refusal('a\n1\n', 65536, { signal: controller.signal });
    expect(error.code).toBe('cancelled');
  });

  it('refuses a header that never ends within the header limit', async () => {
    const error = await refusal(`${'x'.repeat(3000)}`, 100, { maxHeaderBytes: 1024 });
    expect(error.code).toBe('header-too-long');
  });
});

describe('accepted dialects', () => {
  it('accepts a BOM, which is not part of the first name', async () => {
    const { sink, summary } = await parse('\uFEFFage,sex\n70,F\n');
    expect(sink.names).toEqual(['age', 'sex']);
    expect(summary.hadByteOrderMark).toBe(true);
    expect(sink.records).toEqual([['70', 'F']]);
  });

  it('detects semicolon and tab delimiters from the header', async () => {
    const semi = await parse('age;sex;note\n70;F;"a, b"\n');
    expect(semi.summary.delimiter).toBe(';');
    expect(semi.sink.records).toEqual([['70', 'F', 'a, b']]);
    const tab = await parse('age\tsex\n70\tF\n');
    expect(tab.summary.delimiter).toBe('\t');
    expect(tab.sink.records).toEqual([['70', 'F']]);
    // Delimiters inside quoted header names do not count; a tie goes to comma.
    expect((await parse('"a;b;c",d\n1,2\n')).summary.delimiter).toBe(',');
    expect((await parse('a,b;c\n1,2;3\n')).summary.delimiter).toBe(',');
    // A single column: no delimiter at all.
    expect((await parse('age\n70\n71\n')).sink.records).toEqual([['70'], ['71']]);
  });

  it('follows RFC 4180 quoting: delimiters, line breaks and doubled quotes inside quotes, CRLF', async () => {
    const input = 'id,note,x\r\n1,"a,b",2\r\n2,"line one\r\nline two",3\r\n3,"say ""hi""",4\r\n4,"",5\r\n';
    const { sink, summary } = await parse(input);
    expect(sink.records).toEqual([
      ['1', 'a,b', '2'],
      ['2', 'line one\r\nline two', '3'],
      ['3', 'say "hi"', '4'],
      ['4', '', '5'],
    ]);
    // Header, four records, one of them spanning two lines: six physical lines.
    expect(summary.lineCount).toBe(6);
    expect(summary.recordCount).toBe(4);
  });

  it('accepts LF, CRLF and lone CR line ends, blank lines, a trailing delimiter and no final line break', async () => {
    const { sink, summary } = await parse('a,b\r1,2\r\n\n3,\n4,5');
    expect(sink.records).toEqual([['1', '2'], ['3', ''], ['4', '5']]);
    expect(summary.blankLinesSkipped).toBe(1);
    expect(summary.lineCount).toBe(5);
  });

  it('keeps a quote inside an unquoted field as a literal character', async () => {
    const { sink } = await parse('a,b\n5" nail,2\n');
    expect(sink.records).toEqual([['5" nail', '2']]);
  });

  it('gives the same records for every chunk size, with boundaries inside quotes and multi-byte characters', async () => {
    // é is 2 bytes, € 3 and 😀 4 in UTF-8 (RFC 3629): every chunk size from 1 up cuts them somewhere.
    const input = '\uFEFFsite;note;n\r\n"Café ""Nord""";"€ 5;\r\nsecond line";1\r\nÉcole;😀;""\r\n"";x;3';
    const expected = [
      ['Café "Nord"', '€ 5;\r\nsecond line', '1'],
      ['École', '😀', ''],
      ['', 'x', '3'],
    ];
    const length = Buffer.byteLength(input);
    for (let size = 1; size <= length; size++) {
      const { sink, summary } = await parse(input, size);
      expect(sink.names).toEqual(['site', 'note', 'n']);
      expect(sink.records).toEqual(expected);
      expect(summary.delimiter).toBe(';');
      expect(summary.lineCount).toBe(5);
    }
  });

  it('hashes the raw bytes as they stream: the SHA-256 of the whole file, BOM included', async () => {
    const input = Buffer.from('\uFEFFa,b\n1,2\n3,4\n');
    const whole = createHash('sha256').update(input).digest('hex');
    for (const size of [1, 5, 1000]) expect((await parse(input, size)).summary.sha256).toBe(whole);
    // FIPS 180-2 appendix B.1 gives SHA-256("abc"); the reader hashes bytes the same way.
    const reader = new CsvChunkReader(new RecordingSink());
    reader.push(Buffer.from('a'));
    reader.push(Buffer.from('bc\n1\n'));
    expect(reader.finish().sha256).toBe(createHash('sha256').update('abc\n1\n').digest('hex'));
    expect(createHash('sha256').update('abc').digest('hex')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
  });
});

describe('helpers', () => {
  it('finds the first invalid UTF-8 byte', () => {
    expect(firstInvalidUtf8Offset(bytes('ab', [0xe9], 'c'), false)).toBe(2);
    expect(firstInvalidUtf8Offset(bytes('ab€'), true)).toBe(-1);
    // A sequence cut by the end of the bytes is only invalid at the end of the file.
    expect(firstInvalidUtf8Offset(bytes('ab', [0xe2, 0x82]), false)).toBe(-1);
    expect(firstInvalidUtf8Offset(bytes('ab', [0xe2, 0x82]), true)).toBe(2);
  });

  it('formats byte counts in binary units', () => {
    expect(formatBytes(500 * 1024 * 1024)).toBe('500 MiB');
    expect(formatBytes(1536)).toBe('1.5 KiB');
    expect(formatBytes(12)).toBe('12 bytes');
  });
});
