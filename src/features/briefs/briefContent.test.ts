/**
 * The brief's content on a real engine result whose extract has a stratum of nine people
 * (briefTestSupport.ts): every printed count is 0 or at least the threshold, the small
 * stratum is named with a caution, no small count follows from the published margins,
 * and the key numbers are the results page's own (buildResultTables).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import type { Result } from '@/engine/boundary/schemas';
import { buildResultTables } from '../runs/resultTables';
import { CALL_BACK_SPEC } from '../runs/testSupport';
import { buildBriefContent, type BriefContent } from './briefContent';
import { briefCounts } from './briefCounts';
import { renderBriefHtml } from './briefHtml';
import { determinedCells, feasibleRange, isSmallCount } from './suppression';
import { FACTS, smallStratumResult } from './briefTestSupport';

let result: Result;
let content: BriefContent;

beforeAll(async () => {
  result = await smallStratumResult();
  content = buildBriefContent(result, CALL_BACK_SPEC, FACTS, { title: 'Call-back and age', summary: 'A first look.', plot: 'forest', ownCautions: ['  Site B changed its call script in May. '] });
}, 60_000);

/** Every count of people, rows or events printed in a text ("184 people", "3 rows", "12 events"). */
function printedCounts(text: string): number[] {
  return [...text.matchAll(/(?<![\d.,<])(\d{1,3}(?:,\d{3})*) (people|rows|events)/g)].map((match) => Number(match[1].replaceAll(',', '')));
}

describe('brief content with a stratum of nine people', () => {
  it('names the small stratum, shows its estimate with a caution, and never its counts', () => {
    const row = content.keyTable?.rows.find((entry) => entry.level === '90+');
    expect(row).toBeDefined();
    expect(row!.small).toBe(true);
    expect(row!.within.n).toBe('<11'); // nine people: 1..10 at the default threshold 11
    expect(row!.within.effect).toMatch(/\d/);
    for (const cell of row!.cells) {
      expect(['<11', 'withheld', '0']).toContain(cell.n);
      expect(cell.outcome).toBe('withheld');
    }
  });

  it('publishes only counts of 0 or at least the threshold, and none that can be recovered', () => {
    const counts = briefCounts(result, 11);
    const published = new Set(counts.cells.filter((cell) => cell.shown && !counts.plan.suppressed.has(cell.id)).map((cell) => cell.id));
    for (const cell of counts.cells) if (published.has(cell.id)) expect(cell.value === 0 || cell.value >= 11, cell.id).toBe(true);
    const determined = determinedCells(counts.cells, counts.relations, published);
    for (const cell of counts.cells.filter((entry) => isSmallCount(entry.value, 11))) {
      expect(determined.has(cell.id), cell.id).toBe(false);
      const range = feasibleRange(counts.cells, counts.relations, published, cell.id);
      expect(range!.high - range!.low).toBeGreaterThanOrEqual(1);
    }
    // The printed key-table counts, read back from the content: none from 1 to 10.
    for (const row of content.keyTable!.rows) {
      for (const text of [row.within.n, row.within.events ?? '', ...row.cells.flatMap((cell) => [cell.n, cell.events ?? ''])]) {
        if (/^[\d,]+$/.test(text)) expect(isSmallCount(Number(text.replaceAll(',', '')), 11), text).toBe(false);
      }
    }
  });

  it('keeps small counts out of every sentence and the rendered page', () => {
    const html = renderBriefHtml(content, { status: 'Draft preview' });
    const sentences = [content.methods, ...content.limitations, content.plot!.caption, ...content.plot!.points.map((p) => p.hover)].join(' ');
    expect(printedCounts(sentences).length).toBeGreaterThan(0);
    for (const value of printedCounts(sentences)) expect(isSmallCount(value, 11), `${value} in ${sentences}`).toBe(false);
    expect(sentences).toContain('<11 people');
    expect(html).toContain('&lt;11');
    expect(html).toContain('small stratum, read with caution');
  });

  it('carries the results page\'s numbers, the cautions and the sign-off', () => {
    const tables = buildResultTables(result, CALL_BACK_SPEC);
    const level = tables.interaction[0].level;
    expect(content.keyTable!.rows.find((row) => row.level === level)!.reri).toBe(tables.interaction[0].reri!.text);
    expect(content.cautions.length).toBeGreaterThanOrEqual(5);
    expect(content.ownCautions).toEqual(['Site B changed its call script in May.']);
    expect(content.signOff).toEqual({ by: 'Dr Demo', at: '2 December 2026 at 09:00 UTC', meaning: 'Methods and numbers checked.' });
    expect(content.methods).toContain('declared prespecified on 1 December 2026 at 10:00 UTC');
    expect(content.methods).toContain('a'.repeat(64));
  });

  it('honours another threshold', () => {
    const counts = briefCounts(result, 20);
    for (const cell of counts.cells) {
      if (cell.shown && !counts.plan.suppressed.has(cell.id)) expect(cell.value === 0 || cell.value >= 20).toBe(true);
    }
  });
});

describe('brief content of a continuous modifier', () => {
  it('speaks of the marked points and says where the effect is distinguishable from none, as the results page does', async () => {
    const { UP_AND_ABOUT_SPEC, engineResult } = await import('../runs/testSupport');
    const upAndAbout = await engineResult('up-and-about', UP_AND_ABOUT_SPEC);
    const brief = buildBriefContent(upAndAbout, UP_AND_ABOUT_SPEC, FACTS, { title: 'Mobility and frailty', summary: '', plot: 'modifier', ownCautions: [] });
    const tables = buildResultTables(upAndAbout, UP_AND_ABOUT_SPEC);
    expect(brief.slopes!.map((slope) => [slope.label, slope.at])).toEqual(tables.continuous!.slopes.map((row) => [row.label, row.at.text]));
    expect(brief.effectRange).toContain(tables.continuous!.johnsonNeyman!);
    expect(brief.plot!.caption).toMatch(/^The intervention's effect at the marked points of frailty_score/);
    const html = renderBriefHtml(brief, { status: 'Draft preview' });
    expect(html).toContain('data-testid="brief-effect-range"');
    expect(brief.cautions.length).toBeGreaterThan(0);
    // The PDF carries the same words: its text, read back with poppler's pdftotext.
    const { renderBriefPdf } = await import('./briefPdf');
    const { execFileSync } = await import('node:child_process');
    const pdf = await renderBriefPdf(brief, 'A4', { author: 'Test analyst', status: 'Draft preview', createdAt: new Date('2026-12-02T08:00:00Z') });
    const text = execFileSync('pdftotext', ['-layout', '-', '-'], { input: pdf }).toString().replace(/\s+/g, ' ');
    expect(text).toContain('marked point');
    expect(text).toContain('mild');
    expect(text).toContain('distinguishable from no effect');
  }, 60_000);
});
