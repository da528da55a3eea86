/**
 * Brief PDF benchmark (issue target, measured, not asserted): a brief's PDF renders in
 * under 1 s. The brief is built from a real engine result on the synthetic call-back
 * cohort with a stratum of nine people (so suppression has work to do); the figures are
 * the first render in a fresh process (fonts loaded, code not yet warm) and the median
 * and slowest of 20 renders after it, plus the suppression plan and the content alone.
 */
import { buildBriefContent } from '@/features/briefs/briefContent';
import { briefCounts } from '@/features/briefs/briefCounts';
import { renderBriefPdf } from '@/features/briefs/briefPdf';
import { FACTS, smallStratumResult } from '@/features/briefs/briefTestSupport';
import { CALL_BACK_SPEC } from '@/features/runs/testSupport';

const RENDERS = 20;
const result = await smallStratumResult();
const ms = (since: number) => performance.now() - since;

let start = performance.now();
briefCounts(result, 11);
const planMs = ms(start);
start = performance.now();
const content = buildBriefContent(result, CALL_BACK_SPEC, FACTS, { title: 'Call-back and age', summary: 'A first look at the call-back by age band.', plot: 'forest', ownCautions: [] });
const contentMs = ms(start);

start = performance.now();
let pdf = await renderBriefPdf(content, 'A4', { author: 'Bench', status: 'version 1', createdAt: new Date() });
const coldMs = ms(start);
const times: number[] = [];
for (let i = 0; i < RENDERS; i++) {
  start = performance.now();
  pdf = await renderBriefPdf(content, i % 2 ? 'LETTER' : 'A4', { author: 'Bench', status: 'version 1', createdAt: new Date() });
  times.push(ms(start));
}
times.sort((a, b) => a - b);
const median = (times[RENDERS / 2 - 1] + times[RENDERS / 2]) / 2;
const fmt = (value: number) => `${value.toFixed(0)} ms`;
console.log(`suppression plan (${result.strata.length} strata): ${fmt(planMs)}; whole content: ${fmt(contentMs)}`);
console.log(`PDF (${(pdf.length / 1024).toFixed(0)} KB): first render ${fmt(coldMs)}; then median ${fmt(median)}, slowest ${fmt(times.at(-1) ?? 0)} of ${RENDERS}   target < 1000 ms`);
