import { describe, expect, it } from 'vitest';
import { runAnalysis, type AnalysisSpec } from '@/engine';
import { toEngineData } from './engineData';
import { ExtractRefusalError, ingestExtract, readExtractColumns, reviewExtractColumns } from './extracts';
import { chunked } from './testSupport';

// These tests screen under the US HIPAA Safe Harbor regime (ZIP codes, SSNs); the UK and
// generic regimes are tested in privacyRegimes.test.ts.
const us = { regime: 'us-hipaa' } as const;
const ingest = (csv: string, options = {}) => ingestExtract(chunked(csv, 4096), { screen: us, ...options });

function csvOf(columns: Record<string, (i: number) => string | number>, rows: number): string {
  const names = Object.keys(columns);
  const lines = [names.join(',')];
  for (let i = 0; i < rows; i++) lines.push(names.map((n) => String(columns[n](i))).join(','));
  return `${lines.join('\n')}\n`;
}

describe('identifier screen on uploads', () => {
  it('keeps a column flagged by its name alone, never one with a value-based finding', async () => {
    // phone_call is a 0/1 intervention flag: only its name matches the telephone rule.
    const phoneCall = csvOf({ phone_call: (i) => i % 2, outcome: (i) => (i % 3 === 0 ? 1 : 0) }, 60);
    const { columns } = await readExtractColumns(chunked(phoneCall, 4096));
    const refused = reviewExtractColumns(columns, us);
    expect(refused.findings.map((f) => [f.column, f.rule, f.category])).toEqual([['phone_call', 'column-name', 'phone']]);
    const kept = reviewExtractColumns(columns, us, ['phone_call']);
    expect(kept.refused).toBe(false);
    expect(kept.kept.map((f) => [f.column, f.rule])).toEqual([['phone_call', 'column-name']]);
    // Profiled as if unflagged: a 0/1 column is binary.
    expect(kept.profile[0].inferredType).toBe('binary');
    // Real telephone numbers in a column named "phone": the value rule refuses it even when kept, with the same message.
    const phones = csvOf({ phone: (i) => `(555) 010-${String(1000 + i).slice(-4)}`, outcome: (i) => i % 2 }, 20);
    const read = await readExtractColumns(chunked(phones, 4096));
    const plain = reviewExtractColumns(read.columns, us);
    const again = reviewExtractColumns(read.columns, us, ['phone']);
    expect(again.refused).toBe(true);
    expect(again.kept).toEqual([]);
    expect(again.refusals.map((r) => r.message)).toEqual(plain.refusals.map((r) => r.message));
    // Asking to keep a column the screen did not flag is reported.
    expect(reviewExtractColumns(columns, us, ['outcome', 'phone_call']).keptButNotFlagged).toEqual(['outcome']);
  });

  it('refuses a column of full dates as date-like, with the count of dates', async () => {
    const days = ['2024-01-05', '2024-02-11', '2024-03-17', '2024-04-23'];
    const result = await ingest(csvOf({ outcome: (i) => i % 2, seen: (i) => days[i % 4] }, 40));
    expect(result.refused).toBe(true);
    expect(result.findings).toHaveLength(1);
    // All 40 values are ISO dates.
    expect(result.findings[0]).toMatchObject({ column: 'seen', rule: 'date-pattern', category: 'dates', matchedCount: 40, examinedCount: 40 });
    expect(result.profile[1].inferredType).toBe('date-like');
    expect(result.encoded).toEqual([]);
  });

  it('refuses a column of 5-digit ZIP codes, leading zeros included', async () => {
    const zips = ['02139', '10001', '60614', '94110', '00501'];
    const result = await ingest(csvOf({ outcome: (i) => i % 2, region: (i) => zips[i % 5] }, 30));
    // Every one of the 30 values is five digits (two of the five codes start with 0).
    expect(result.findings.map((f) => [f.column, f.rule, f.matchedCount])).toEqual([['region', 'postal-code-pattern', 30]]);
    expect(result.profile[1].inferredType).toBe('identifier-like');
  });

  it('refuses a column of e-mail addresses', async () => {
    const result = await ingest(csvOf({ contact: (i) => `clinician${i % 7}@example.org`, outcome: (i) => i % 2 }, 21));
    // All 21 rows hold an address (7 distinct, so the near-unique rule stays quiet).
    expect(result.findings.map((f) => [f.column, f.rule, f.matchedCount, f.examinedCount])).toEqual([['contact', 'email-pattern', 21, 21]]);
    expect(result.findings[0].message).not.toMatch(/clinician/);
  });

  it('refuses ages of 95 and counts them', async () => {
    // Ages 60, 70, 80, 95 repeating over 20 rows: 5 of them are 95.
    const ages = [60, 70, 80, 95];
    const result = await ingest(csvOf({ age: (i) => ages[i % 4], outcome: (i) => i % 2 }, 20));
    expect(result.findings).toHaveLength(1);
    expect(result.findings[0]).toMatchObject({ column: 'age', rule: 'age-over-89', matchedCount: 5, examinedCount: 20 });
  });

  it('refuses a fixture with one column per detectable category, one message per column, and stores nothing', async () => {
    const rows = 60;
    const hex = (i: number): string => i.toString(16);
    // Name-detected columns hold harmless values; value-detected columns have neutral names
    // and repeat 10 values, so that only the intended rule applies.
    const columns: Record<string, (i: number) => string | number> = {
      outcome: (i) => i % 2,
      site: (i) => ['North', 'South', 'East'][i % 3],
      patient_name: (i) => i % 3,
      home_address: (i) => i % 3,
      zip_code: (i) => i % 3,
      date_of_birth: (i) => i % 3,
      phone_number: (i) => i % 3,
      fax: (i) => i % 3,
      email: (i) => i % 3,
      ssn: (i) => i % 3,
      mrn: (i) => i % 3,
      member_id: (i) => i % 3,
      account_number: (i) => i % 3,
      licence_number: (i) => i % 3,
      licence_plate: (i) => i % 3,
      device_serial: (i) => i % 3,
      website: (i) => i % 3,
      ip_address: (i) => i % 3,
      fingerprint: (i) => i % 3,
      photo: (i) => i % 3,
      uuid: (i) => i % 3,
      contact: (i) => `person${i % 10}@example.org`,
      reference: (i) => `900-12-${3450 + (i % 10)}`,
      callback_line: (i) => `212-555-01${10 + (i % 10)}`,
      host: (i) => `192.0.2.${i % 10}`,
      host6: (i) => `2001:db8::${hex(i % 10)}`,
      page: (i) => `https://example.org/p/${i % 10}`,
      seen: (i) => `2024-03-${10 + (i % 10)}`,
      compact_seen: (i) => 20240310 + (i % 10),
      region: (i) => `0${2130 + (i % 10)}`,
      uk_region: (i) => `SW1A ${i % 10}AA`,
      age: (i) => 85 + (i % 10),
      record_code: (i) => `K${1000 + i}`,
    };
    const expected: Record<string, string> = {
      patient_name: 'names', home_address: 'geography', zip_code: 'geography', date_of_birth: 'dates',
      phone_number: 'phone', fax: 'fax', email: 'email', ssn: 'ssn', mrn: 'medical-record-number',
      member_id: 'health-plan-number', account_number: 'account-number', licence_number: 'certificate-or-licence-number',
      licence_plate: 'vehicle-identifier', device_serial: 'device-identifier', website: 'url', ip_address: 'ip-address',
      fingerprint: 'biometric', photo: 'face-image', uuid: 'unique-code', contact: 'email', reference: 'ssn',
      callback_line: 'phone', host: 'ip-address', host6: 'ip-address', page: 'url', seen: 'dates', compact_seen: 'dates',
      region: 'geography', uk_region: 'geography', age: 'age-over-89', record_code: 'unique-code',
    };
    const result = await ingest(csvOf(columns, rows));
    expect(result.refused).toBe(true);
    expect(result.encoded).toEqual([]);
    const refusals = result.refusals;
    expect(refusals.map((r) => r.column)).toEqual(Object.keys(expected));
    for (const refusal of refusals) {
      expect(refusal.categories).toEqual([expected[refusal.column]]);
      expect(refusal.message.startsWith(`Column "${refusal.column}" may identify people: `)).toBe(true);
    }
    // The two analysis columns pass.
    expect(result.profile[0].inferredType).toBe('binary');
    expect(result.profile[1].inferredType).toBe('categorical');
  });

  it('drops flagged columns while reading: they are not kept, and the rest is accepted', async () => {
    const csv = csvOf({ email: (i) => `person${i % 5}@example.org`, outcome: (i) => i % 2, arm: (i) => (i % 3 === 0 ? 'call' : 'usual') }, 12);
    const result = await ingest(csv, { dropColumns: ['EMAIL'] });
    expect(result.refused).toBe(false);
    expect(result.droppedColumns).toEqual(['email']);
    expect(result.columns.map((c) => c.name)).toEqual(['outcome', 'arm']);
    expect(result.columns.map((c) => c.index)).toEqual([1, 2]);
    expect(result.encoded.map((c) => c.name)).toEqual(['outcome', 'arm']);
    const text = result.encoded[1];
    expect(text.levels).toEqual(['call', 'usual']);
  });

  it('refuses a drop list naming a column the file does not have, before reading the rows', async () => {
    const error = await ingest('a,b\n1,2\n', { dropColumns: ['c'] }).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ExtractRefusalError);
    expect((error as ExtractRefusalError).code).toBe('unknown-drop-column');
  });
});

describe('columns', () => {
  it('infers binary, categorical, continuous and count columns', async () => {
    const csv = 'readmitted,sex,band,los,prior,delta\n1,F,18-44,3.5,0,-1\n0,M,45-64,2.25,2,0\n0,F,80+,10,1,2\n1,M,18-44,1,4,3\n';
    const result = await ingest(csv);
    expect(result.refused).toBe(false);
    expect(result.profile.map((p) => [p.name, p.inferredType, p.storage])).toEqual([
      ['readmitted', 'binary', 'numeric'],
      ['sex', 'binary', 'text'],
      ['band', 'categorical', 'text'],
      ['los', 'continuous', 'numeric'],
      ['prior', 'count', 'numeric'],
      ['delta', 'continuous', 'numeric'],
    ]);
    // Levels in code-unit order with counts (18-44 twice, 45-64 once, 80+ once).
    expect(result.profile[2].levels).toEqual([
      { value: '18-44', count: 2 },
      { value: '45-64', count: 1 },
      { value: '80+', count: 1 },
    ]);
  });

  it('treats empty fields and NA, N/A, NULL as missing; trims spaces', async () => {
    const result = await ingest('x,y\n1, a \n,NA\nNULL,a\n N/A ,\n4,b\n');
    const [x, y] = result.profile;
    // x: 1, empty, NULL, " N/A ", 4 -> three missing, values {1, 4}, mean 2.5.
    expect([x.missingCount, x.distinctCount, x.numeric?.mean]).toEqual([3, 2, 2.5]);
    // y: " a ", NA, a, empty, b -> two missing, a twice, b once.
    expect([y.missingCount, y.levels]).toEqual([2, [{ value: 'a', count: 2 }, { value: 'b', count: 1 }]]);
  });

  it('reads the shared tokens in any case as missing, never as levels or text, and counts each per column', async () => {
    const csv = 'dose,site,arm\n1.5,north,0\nna,.,-\n.,south,1\nNaN,null,.\n-,N/a,0\n\n2,north,NA\n,south,1\n';
    const result = await ingest(csv);
    const [dose, site, arm] = result.profile;
    // dose: 1.5, na, ".", NaN, "-", 2, empty -> numbers 1.5 and 2, five missing, still numeric.
    expect([dose.storage, dose.missingCount, dose.numeric?.mean]).toEqual(['numeric', 5, 1.75]);
    expect(dose.missingTokens).toEqual([{ token: '', count: 1 }, { token: 'NA', count: 1 }, { token: '.', count: 1 }, { token: '-', count: 1 }, { token: 'NaN', count: 1 }]);
    // site: ".", null, N/a are missing; the levels are north and south only.
    expect(site.levels).toEqual([{ value: 'north', count: 2 }, { value: 'south', count: 2 }]);
    expect(site.missingTokens).toEqual([{ token: 'N/A', count: 1 }, { token: 'NULL', count: 1 }, { token: '.', count: 1 }]);
    // arm: "-", ".", NA are missing; 0 and 1 make it binary.
    expect([arm.storage, arm.inferredType, arm.missingCount]).toEqual(['numeric', 'binary', 3]);
  });

  it('flags levels that look like undeclared missing codes ("unknown", 999) in the profile', async () => {
    const result = await ingest('stage,smoker,age\n1,yes,40\n2,unknown,51\n999,no,63\n3,yes,999\n2,no,48\n1,Unknown,999\n');
    const [stage, smoker, age] = result.profile;
    expect(stage.suspectMissing).toEqual(['999']);
    expect(smoker.suspectMissing).toEqual(['Unknown', 'unknown']);
    // 999 beside ages of 40 to 63 is flagged too: every other value is at most (999 + 1) / 2.
    expect(age.suspectMissing).toEqual(['999']);
  });

  it('names the first text value of a column of numbers, with its line (blank lines and quoted breaks counted)', async () => {
    const result = await ingest('id,note,score\n1,"two\nlines",3\n\n2,ok,4\n3,ok,see chart\n4,ok,n/a\n');
    const score = result.profile[2];
    expect(score.storage).toBe('text');
    // Line 1 header, lines 2-3 the record with a quoted break, line 4 blank, line 5 "2", line 6 "see chart".
    expect(score.notes[0]).toContain('the first text value is "see chart", on line 6');
  });

  it('an analysis of a numeric covariate holding text names the value, the column and its first line', async () => {
    const rows = Array.from({ length: 30 }, (_, i) => `${i % 2},${i % 3 === 0 ? 1 : 0},${i % 4 < 2 ? 'a' : 'b'},${i === 20 ? 'see chart' : i === 3 ? 'NA' : (i * 0.7) % 5}`);
    // One blank line after the fifth data row moves every later row one line down.
    const csv = ['arm,event,site,dose', ...rows.slice(0, 5), '', ...rows.slice(5)].join('\n');
    const read = await readExtractColumns([csv]);
    const data = toEngineData(read.read.recordCount, read.columns.map((c) => (c.kind === 'numeric' ? { name: c.name, storage: 'numeric' as const, values: c.values } : { name: c.name, storage: 'text' as const, codes: c.codes, levels: c.levels })), { arm: 'categorical', event: 'categorical', site: 'categorical', dose: 'continuous' });
    const spec: AnalysisSpec = {
      outcome: { column: 'event', type: 'binary' }, exposure: { column: 'arm', reference: '0' }, modifier: { column: 'site', type: 'categorical', reference: 'a' },
      covariates: [{ column: 'dose', type: 'continuous' }], model: 'logistic', ci: { level: 0.95, method: 'delta' },
    };
    // Data row 21 (i = 20) is on line 23: header line 1, rows from line 2, plus the blank line.
    await expect(runAnalysis({ ...data, lineOfRow: read.lineOfRow }, spec, { threads: 0 })).rejects.toMatchObject({
      code: 'COLUMN_TYPE_MISMATCH', column: 'dose', level: 'see chart', message: expect.stringContaining('"see chart" (first on line 23)'),
    });
  });

  it('keeps a column with any text as text, and says how many values were numbers', async () => {
    const result = await ingest('score\n1\n2\nunknown\n2\n');
    const [score] = result.profile;
    expect(score.storage).toBe('text');
    expect(score.levels).toEqual([
      { value: '1', count: 1 },
      { value: '2', count: 2 },
      { value: 'unknown', count: 1 },
    ]);
    expect([score.numericValueCount, score.textValueCount]).toEqual([3, 1]);
    expect(score.notes[0]).toMatch(/^3 values are numbers and 1 are text/);
  });

  it('stops learning levels at the cap and refuses the column', async () => {
    const csv = csvOf({ note: (i) => `free text ${i}`, outcome: (i) => i % 2 }, 30);
    // 30 distinct values against a cap of 10: the first 10 are kept, the rest are not.
    const result = await ingest(csv, { maxLevels: 10 });
    const note = result.columns[0];
    expect(note.kind === 'text' && note.levelsOverflowed).toBe(true);
    expect(note.kind === 'text' && note.levels.length).toBe(10);
    expect(result.findings.map((f) => f.rule)).toEqual(['too-many-levels']);
    expect(result.profile[0]).toMatchObject({ inferredType: 'identifier-like', distinctCount: 10, distinctIsLowerBound: true });
  });

  it('reads decimal commas when asked to (semicolon files)', async () => {
    // (3.5 + 1.25) / 2 = 2.375.
    const result = await ingest('los;band\n3,5;a\n1,25;b\n', { decimalSeparator: ',' });
    expect(result.profile[0].numeric?.mean).toBe(2.375);
  });

  it('reads every row whatever the size hint says (growing columns keep earlier rows)', async () => {
    // Rows i = 0..4999: x = i % 5 (mean 2), y text where i % 7 === 0 else a number, z missing every third row.
    const csv = csvOf({ x: (i) => i % 5, y: (i) => (i % 7 === 0 ? 'none' : i % 3), z: (i) => (i % 3 === 0 ? '' : 1) }, 5000);
    for (const expectedBytes of [undefined, 10, csv.length, 100 * csv.length]) {
      const result = await ingestExtract(chunked(csv, 997), { expectedBytes });
      const [x, y, z] = result.columns;
      expect(x.kind === 'numeric' && [...x.values].every((v, i) => v === i % 5)).toBe(true);
      expect(y.kind === 'text' && [...y.codes].every((code, i) => y.levels[code] === (i % 7 === 0 ? 'none' : String(i % 3)))).toBe(true);
      // 0, 3, ..., 4998: 1,667 missing rows.
      expect(z.missingCount).toBe(1667);
      expect(z.kind === 'numeric' && [...z.values].every((v, i) => (i % 3 === 0 ? Number.isNaN(v) : v === 1))).toBe(true);
    }
  });

  it('reports progress by stage', async () => {
    const stages: string[] = [];
    const csv = csvOf({ x: (i) => i % 5, y: (i) => i % 2 }, 5000);
    await ingestExtract(chunked(csv, 1000), { expectedBytes: csv.length, onProgress: (p) => stages.push(p.stage) });
    expect(stages[0]).toBe('reading');
    expect(stages.slice(-3)).toEqual(['screening', 'profiling', 'storing']);
  });
});

describe('a million-row file whose last line is broken', () => {
  async function* millionRows(lastLine: string): AsyncGenerator<Uint8Array> {
    yield Buffer.from('outcome,arm,score\n');
    const block: string[] = [];
    for (let i = 0; i < 999_999; i++) {
      block.push(`${i & 1},${i % 3},${i % 10}`);
      if (block.length === 20_000) {
        yield Buffer.from(`${block.join('\n')}\n`);
        block.length = 0;
      }
    }
    yield Buffer.from(`${block.join('\n')}\n${lastLine}`);
  }

  it('refuses a short last row at line 1,000,001 (header on line 1, the millionth row after it)', async () => {
    const error = await ingestExtract(millionRows('1,2\n')).catch((e: unknown) => e);
    expect(error).toBeInstanceOf(ExtractRefusalError);
    expect((error as ExtractRefusalError).code).toBe('ragged-row');
    expect((error as ExtractRefusalError).line).toBe(1_000_001);
  });

  it('refuses an unterminated quote on the last line', async () => {
    const error = await ingestExtract(millionRows('1,2,"3\n')).catch((e: unknown) => e);
    expect((error as ExtractRefusalError).code).toBe('unterminated-quote');
    expect((error as ExtractRefusalError).line).toBe(1_000_001);
  });
});
