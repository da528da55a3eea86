import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { ColumnData } from './columnAccumulator';
import { columnGroups, fileChunks, holdsEveryColumn, mergeReviews, planColumnGroups } from './columnPasses';
import { readExtractColumns, reviewExtractColumns } from './extracts';

const folder = mkdtempSync(path.join(tmpdir(), 'column-passes-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

/**
 * Invented rows that exercise every column shape: numbers with missing tokens, a mixed
 * column (numbers and text, so the numbers become levels), text with a blank line and a
 * quoted line break before some rows, an age column, a column flagged by its name alone,
 * and a column to drop.
 */
function sampleCsv(rows: number): string {
  const lines = ['length_of_stay,ward,grade,age,phone_call,note,outcome'];
  for (let i = 0; i < rows; i += 1) {
    if (i === 7) lines.push('');
    const stay = i % 11 === 0 ? 'NA' : (1 + (i % 17) * 0.5).toFixed(1);
    const ward = i === 12 ? '"North\nwing"' : ['North', 'South', 'East'][i % 3];
    const grade = i % 5 === 0 ? 'unknown' : String(i % 4);
    lines.push([stay, ward, grade, 20 + (i % 60), i % 2, `n${i % 9}`, i % 3 === 0 ? 1 : 0].join(','));
  }
  return `${lines.join('\n')}\n`;
}

function comparable(column: ColumnData): unknown {
  return column.kind === 'numeric'
    ? { ...column, values: Array.from(column.values), missing: Array.from(column.missing) }
    : {
      ...column, codes: Array.from(column.codes), missing: Array.from(column.missing), levelCounts: Array.from(column.levelCounts),
      levelFirstLines: Array.from(column.levelFirstLines), numericValues: column.numericValues ? Array.from(column.numericValues) : null,
    };
}

describe('reading a stored upload again a few columns at a time', () => {
  it('plans groups that fit the budget, a column alone when it is larger', () => {
    // 1,000 rows take at most 12,125 bytes per column (8 + 4 + 1/8 bytes a row).
    expect(planColumnGroups([0, 1, 2, 3, 4], 1000, 25_000)).toEqual([[0, 1], [2, 3], [4]]);
    expect(planColumnGroups([0, 2, 5], 10_000_000, 1024)).toEqual([[0], [2], [5]]);
  });

  it('gives the same columns, profiles and findings as one read of the whole file', async () => {
    const file = path.join(folder, 'sample.csv');
    writeFileSync(file, sampleCsv(500));
    const options = { dropColumns: ['note'] };
    const whole = await readExtractColumns(fileChunks(file), options);
    expect(holdsEveryColumn(whole)).toBe(true);
    // The first read of a large upload keeps no column (only the ones asked to keep).
    const scanned = await readExtractColumns(fileChunks(file), { ...options, onlyColumns: (name) => name === 'phone_call' });
    expect(scanned.columns.map((c) => c.name)).toEqual(['phone_call']);
    expect(scanned.header).toEqual(['length_of_stay', 'ward', 'grade', 'age', 'phone_call', 'note', 'outcome']);
    expect(scanned.droppedColumns).toEqual(['note']);
    expect(scanned.read).toEqual(whole.read);
    const groupSizes: number[] = [];
    const columns: ColumnData[] = [];
    const reviews = [];
    // A budget of two columns of 500 rows: three passes over the file for six kept columns.
    for await (const group of columnGroups(file, scanned, { ...options, budget: 2 * 500 * 12.125 })) {
      groupSizes.push(group.length);
      columns.push(...group);
      reviews.push(reviewExtractColumns(group, {}, ['phone_call']));
    }
    expect(groupSizes).toEqual([2, 2, 2]);
    expect(columns.map(comparable)).toEqual(whole.columns.map(comparable));
    const merged = mergeReviews(reviews, ['phone_call']);
    expect(merged).toEqual(reviewExtractColumns(whole.columns, {}, ['phone_call']));
    // phone_call is flagged by its name only and kept; nothing refuses the file.
    expect(merged.kept.map((f) => [f.column, f.rule])).toEqual([['phone_call', 'column-name']]);
    expect(merged.refused).toBe(false);
    expect(merged.profile.map((p) => p.name)).toEqual(['length_of_stay', 'ward', 'grade', 'age', 'phone_call', 'outcome']);
  });

  it('refuses to read a file that changed since the first read', async () => {
    const file = path.join(folder, 'changing.csv');
    writeFileSync(file, sampleCsv(50));
    const scanned = await readExtractColumns(fileChunks(file), { onlyColumns: () => false });
    writeFileSync(file, sampleCsv(51));
    await expect(async () => {
      for await (const group of columnGroups(file, scanned, {})) expect(group).toBeDefined();
    }).rejects.toThrow('changed');
  });
});
