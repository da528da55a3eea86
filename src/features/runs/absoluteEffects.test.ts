/**
 * The absolute effects and E-values through the product: the results page's view and
 * server-rendered table, the plot, the CSV, the brief (small strata) and the audit words,
 * on real engine results of the SYNTHETIC call-back cohort with "standardize" set.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { experimental_AstroContainer as AstroContainer } from 'astro/container';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Result, Spec } from '@/engine/boundary/schemas';
import { ResultSchema } from '@/engine/boundary/schemas';
import { runAnalysis } from '@/engine/index';
import { specChanges } from '../audit/auditWords';
import { buildBriefContent } from '../briefs/briefContent';
import { renderBriefHtml } from '../briefs/briefHtml';
import { renderBriefPdf } from '../briefs/briefPdf';
import { FACTS, smallStratumCsv } from '../briefs/briefTestSupport';
import { absoluteEffectsView, eValuesView, nntText } from './absoluteEffectsView';
import { engineDataOfCsv } from './engineInput';
import { absoluteEffectsFigure } from './plots/absoluteEffectsFigure';
import { plotInput } from './plots/plotInput';
import { PLOT_CONFIG } from './plots/plotFigures';
import { resultCsv } from './resultCsv';
import ResultTables from './ResultTables.astro';
import { CALL_BACK_SPEC, engineResult } from './testSupport';

const SPEC: Spec = { ...CALL_BACK_SPEC, standardize: true };
let result: Result;

beforeAll(async () => {
  result = await engineResult('call-back', SPEC);
}, 60_000);

describe('absolute effects on the results page', () => {
  it('lists every level, reference first, with the engine\'s unrounded numbers', () => {
    const view = absoluteEffectsView(result)!;
    expect(view.rows[0].isReference).toBe(true);
    expect(view.rows.map((row) => row.level)).toEqual(['18-44', '45-64', '65-79', '80+']);
    for (const row of view.rows) {
      const entry = result.standardized!.levels.find((level) => level.level === row.level)!;
      expect(row.riskDifference.estimate).toBe(entry.riskDifference.estimate);
      expect(row.riskUnexposed.estimate).toBe(entry.riskUnexposed.estimate);
      expect(row.nnt.estimate).toBe(entry.nnt.estimate);
      expect(row.interactionContrast === null).toBe(row.isReference);
    }
    expect(view.explanation).toContain('Delta-method intervals with the model-based variance');
  });

  it('writes the NNT as to treat or to harm, through infinity when the RD interval includes 0 (Altman 1998)', () => {
    // Hand arithmetic: 1/0.05 = 20, 1/0.08 = 12.5 → 13, 1/0.01 = 100.
    expect(nntText({ estimate: 20, direction: 'treat', throughInfinity: true, lower: { value: 12.5, direction: 'treat' }, upper: { value: 100, direction: 'harm' } }))
      .toBe('20 to treat (13 to treat … ∞ … 100 to harm)');
    expect(nntText({ estimate: 10, direction: 'harm', throughInfinity: false, lower: { value: 20, direction: 'harm' }, upper: { value: 5, direction: 'harm' } }))
      .toBe('10 to harm (5 to 20)');
  });

  it('renders the absolute-effects table before the other additive view, and E-values beside each stratum effect with their sentence', async () => {
    const container = await AstroContainer.create();
    const html = await container.renderToString(ResultTables, { props: { result, spec: SPEC } });
    const absoluteAt = html.indexOf('data-testid="absolute-effects-table"');
    expect(absoluteAt).toBeGreaterThan(html.indexOf('data-testid="joint-table"'));
    expect(absoluteAt).toBeLessThan(html.indexOf('data-testid="interaction-table"'));
    const entry = result.eValues!.entries.find((item) => item.level === '65-79')!;
    expect(html).toContain(`data-testid="evalue-65-79" data-estimate="${entry.estimate}" data-limit="${entry.limit}"`);
    expect(html).toContain('data-testid="evalue-sentence"');
    const plain = await container.renderToString(ResultTables, { props: { result: await engineResult('call-back', CALL_BACK_SPEC), spec: CALL_BACK_SPEC } });
    expect(plain).not.toContain('absolute-effects-table');
  });

  it('says which prevalence decided the odds-ratio conversion', () => {
    const view = eValuesView(result)!;
    expect(view.basis).toMatch(/over 15 % of the level's rows, both arms/);
    expect(view.sentence).toMatch(/^E-value: how strong/);
  });

  it('plots the standardized risks of each arm in percent, with the product\'s plot config', () => {
    const figure = absoluteEffectsFigure(plotInput(result))!;
    const [without, withIt] = figure.data as { x: number[]; y: string[] }[];
    const levels = result.standardized!.levels;
    const first = levels.find((level) => level.level === '18-44')!;
    expect(without.y[0]).toBe('18-44 (ref.)');
    expect(without.x[0]).toBeCloseTo(100 * first.riskUnexposed.estimate!, 12);
    expect(withIt.x[0]).toBeCloseTo(100 * first.riskExposed.estimate!, 12);
    expect(PLOT_CONFIG.showSendToCloud).toBe(false);
    expect(PLOT_CONFIG.modeBarButtonsToRemove).toContain('sendDataToCloud');
  });
});

describe('absolute effects in the CSV, the brief and the audit trail', () => {
  it('CSV: standardized risks, RD, NNT, interaction contrast and E-values with unrounded numbers', () => {
    const csv = resultCsv(result, SPEC);
    const entry = result.standardized!.levels.find((level) => level.level === '80+')!;
    expect(csv).toContain(`absolute,80+,,standardized RD of call_back = 1 vs 0,${entry.riskDifference.estimate},${entry.riskDifference.lower},${entry.riskDifference.upper},${entry.riskDifference.p}`);
    expect(csv).toMatch(/absolute,80\+,,interaction contrast \(RD − RD of 18-44\)/);
    expect(csv).toMatch(/absolute,80\+,,NNT to (treat|harm),/);
    const e = result.eValues!.entries.find((item) => item.level === '80+')!;
    expect(csv).toContain(`e-value,80+,,E-value of the odds ratio,${e.estimate},`);
    expect(csv).toContain(`e-value,80+,,E-value of the interval limit nearer 1,${e.limit},`);
  });

  it('brief: the absolute table and E-values, with the small stratum marked and no count of 1 to 10', async () => {
    const small = ResultSchema.parse(await runAnalysis(engineDataOfCsv(smallStratumCsv()), SPEC, { threads: 0 }));
    const content = buildBriefContent(small, SPEC, FACTS, { title: 'Call-back and age', summary: 'A first look.', plot: 'none', ownCautions: [] });
    const table = content.absolute!;
    const levels = table.table.slice(1).map((row) => row[0].replace(' (reference)', ''));
    expect(levels).toContain('90+');
    expect(table.small[levels.indexOf('90+')]).toBe(true);
    expect(content.methods).toContain('Absolute effects were standardized within each level of age_band');
    expect(content.methods).toContain('E-values follow VanderWeele and Ding');
    const html = renderBriefHtml(content, { status: 'Draft preview' });
    expect(html).toContain('data-testid="brief-absolute-table"');
    expect(html).toContain('data-testid="brief-evalues"');
    // The absolute table prints no count at all: every cell is an estimate, an interval or an NNT.
    const absoluteHtml = html.slice(html.indexOf('brief-absolute-table'), html.indexOf('</table>', html.indexOf('brief-absolute-table')));
    expect(absoluteHtml).not.toMatch(/\b\d+ (people|rows|events)\b/);
    // The PDF draws the same table; infinity is spelled out (the embedded font has no ∞).
    const file = join(mkdtempSync(join(tmpdir(), 'absolute-brief-')), 'brief.pdf');
    writeFileSync(file, await renderBriefPdf(content, 'A4', { author: 'Test', status: 'Draft preview', createdAt: new Date('2026-12-02T09:00:00Z') }));
    const text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' });
    expect(text).toContain('Absolute effects.');
    expect(text).toContain('E-value: how strong');
    expect(small.standardized!.levels.some((level) => level.nnt.throughInfinity)).toBe(true);
    expect(text).toContain('infinity');
    expect(text).not.toContain('∞');
  });

  it('audit: names the option when an analysis changes it', () => {
    expect(specChanges({ spec: {} }, { spec: { standardize: true } })).toEqual(['the absolute effects (standardized risks, risk difference and NNT) from none to yes']);
  });
});
