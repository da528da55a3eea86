import { readFileSync } from 'node:fs';
import { experimental_AstroContainer as AstroContainer } from 'astro/container';
import { beforeAll, describe, expect, it } from 'vitest';
import type { Result, Spec } from '@/engine/boundary/schemas';
import { runAnalysis } from '@/engine/index';
import { engineDataOfCsv } from './engineInput';
import { CAUTION_VERSION, RESULT_CAUTIONS } from '@/lib/cautions';
import ResultTables from './ResultTables.astro';
import { CALL_BACK_SPEC, engineResult, UP_AND_ABOUT_SPEC } from './testSupport';

interface Rendered {
  text: string;
  attributes: Record<string, string>;
}

/** The elements with a data-testid in rendered HTML, by test id (our Estimate spans hold text only). */
function byTestId(html: string): Map<string, Rendered> {
  const found = new Map<string, Rendered>();
  for (const match of html.matchAll(/<(\w+)\s([^>]*data-testid="([^"]+)"[^>]*)>([^<]*)(?=<)/g)) {
    const attributes = Object.fromEntries([...match[2].matchAll(/([\w-]+)="([^"]*)"/g)].map((attribute) => [attribute[1], attribute[2]]));
    found.set(match[3], { text: match[4], attributes });
  }
  return found;
}

const decode = (text: string) => text.replace(/&amp;/g, '&').replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&#39;/g, "'");
const raw = (value: number | null | undefined) => (value === null || value === undefined ? '' : String(value));

describe('ResultTables.astro (server-rendered, real engine results)', () => {
  let container: AstroContainer;
  let callBack: Result;
  let upAndAbout: Result;
  beforeAll(async () => {
    container = await AstroContainer.create();
    callBack = await engineResult('call-back', CALL_BACK_SPEC);
    upAndAbout = await engineResult('up-and-about', UP_AND_ABOUT_SPEC);
  });

  it('puts the caution block first, with every caution sentence and its version', async () => {
    const html = await container.renderToString(ResultTables, { props: { result: callBack, spec: CALL_BACK_SPEC } });
    const cautionAt = html.indexOf('data-testid="result-cautions"');
    expect(cautionAt).toBeGreaterThan(-1);
    expect(cautionAt).toBeLessThan(html.indexOf('data-testid="joint-table"'));
    for (const sentence of RESULT_CAUTIONS) expect(decode(html)).toContain(sentence);
    expect(html).toContain(`data-caution-version="${CAUTION_VERSION}"`);
  });

  it('shows the numbers of the result in the key cells', async () => {
    const html = await container.renderToString(ResultTables, { props: { result: callBack, spec: CALL_BACK_SPEC } });
    const cells = byTestId(html);
    for (const stratum of callBack.strata) {
      const cell = cells.get(`stratum-effect-${stratum.level}`);
      expect(cell, stratum.level).toBeDefined();
      expect(cell!.attributes['data-estimate']).toBe(raw(stratum.effect.estimate));
      expect(cell!.attributes['data-lower']).toBe(raw(stratum.effect.lower));
      expect(cell!.attributes['data-upper']).toBe(raw(stratum.effect.upper));
      // The text shows the same numbers rounded to 2 decimals.
      expect(cell!.text).toBe(`${stratum.effect.estimate!.toFixed(2)} (${stratum.effect.lower!.toFixed(2)} to ${stratum.effect.upper!.toFixed(2)})`);
      expect(cells.get(`stratum-p-holm-${stratum.level}`)!.attributes['data-value']).toBe(raw(stratum.pAdjusted.holm));
    }
    for (const entry of callBack.interaction.additive) {
      expect(cells.get(`reri-${entry.level}`)!.attributes['data-estimate']).toBe(raw(entry.reri!.estimate));
      expect(cells.get(`ap-${entry.level}`)!.attributes['data-estimate']).toBe(raw(entry.ap!.estimate));
    }
    for (const entry of callBack.interaction.multiplicative) {
      expect(cells.get(`ratio-of-ratios-${entry.level}`)!.attributes['data-estimate']).toBe(raw(entry.estimate));
      expect(cells.get(`ratio-of-ratios-p-${entry.level}`)!.attributes['data-value']).toBe(raw(entry.p));
    }
    for (const cell of callBack.joint!.cells) {
      expect(cells.get(`joint-n-${cell.exposure}-${cell.modifier}`)!.attributes['data-value']).toBe(raw(cell.n));
      expect(cells.get(`joint-events-${cell.exposure}-${cell.modifier}`)!.attributes['data-value']).toBe(raw(cell.events));
      if (cell.effect) expect(cells.get(`joint-effect-${cell.exposure}-${cell.modifier}`)!.attributes['data-estimate']).toBe(raw(cell.effect.estimate));
    }
    expect(cells.get('omnibus-p')!.attributes['data-value']).toBe(raw(callBack.interaction.omnibus.p));
    expect(cells.get('mh-pooled')!.attributes['data-estimate']).toBe(raw(callBack.stratifiedTables!.mantelHaenszel.oddsRatio!.estimate));
    expect(cells.get('crude-check-homogeneity-p')!.attributes['data-value']).toBe(raw(callBack.stratifiedTables!.homogeneity.breslowDayTarone!.p));
    const text = decode(html);
    expect(text).toContain('Crude cross-check of the adjusted model');
    expect(text).toContain('Does the effect differ? Interaction on the additive and multiplicative scales');
    expect(text).toMatch(/data-testid="joint-reading"[^>]*>The highlighted column answers the question/);
    // Every non-reference row says which reference it is measured against.
    for (const entry of callBack.interaction.additive) expect(text).toMatch(new RegExp(`data-testid="interaction-reference-${entry.level.replace('+', '\\+')}"[^>]*>(against|additive measures against)`));
    // The engine's per-level warning is said once.
    expect(text.match(/The intervention lowers risk/g)?.length ?? 0).toBeLessThanOrEqual(1);
  });

  it('renders the continuous-modifier summary with slopes and the Johnson-Neyman sentence', async () => {
    const html = await container.renderToString(ResultTables, { props: { result: upAndAbout, spec: UP_AND_ABOUT_SPEC } });
    const cells = byTestId(html);
    upAndAbout.slopes!.forEach((slope, index) => {
      expect(cells.get(`slope-effect-${index}`)!.attributes['data-estimate']).toBe(raw(slope.estimate));
      expect(cells.get(`slope-at-${index}`)!.attributes['data-value']).toBe(raw(slope.at));
    });
    expect(html).not.toContain('data-testid="joint-table"');
    expect(decode(html)).toMatch(/data-testid="jn-sentence"[^>]*>The intervention's effect is distinguishable from no effect/);
    expect(cells.get('modifier-p5')!.attributes['data-value']).toBe(raw(upAndAbout.spread!.p5));
    expect(decode(html)).toContain('Does the effect differ? The difference in mean differences');
    expect(decode(html)).not.toContain('Interaction on the additive and multiplicative scales');
    const did = upAndAbout.interaction.additive[0];
    expect(cells.get(`did-${did.level}`)!.attributes['data-estimate']).toBe(raw(did.differenceInDifferences!.estimate));
  });
  it('shows the cluster-robust variance with its clusters, the rates per 1,000 bed-days and the overdispersion check', async () => {
    // The seeded synthetic wards of tests/reference/cluster-rate-weight (invented data).
    const wards = engineDataOfCsv(readFileSync(new URL('../../../tests/reference/cluster-rate-weight/data/wards.csv', import.meta.url)));
    const spec: Spec = {
      outcome: { column: 'falls', type: 'count', personTime: 'bed_days' },
      exposure: { column: 'called', reference: '0' },
      modifier: { column: 'frailty', type: 'categorical', reference: 'low' },
      covariates: [],
      model: 'poisson',
      ci: { level: 0.95, method: 'delta' },
      cluster: { column: 'site' },
    };
    const result = await runAnalysis(wards, spec, { threads: 0, personTimeUnit: 'bed-days' });
    const html = decode(await container.renderToString(ResultTables, { props: { result, spec } }));
    expect(html).toMatch(/data-testid="variance-line" data-clusters="40"[^>]*>Standard errors: cluster-robust \(CR1, Liang and Zeger 1986\), 40 clusters of site/);
    expect(html).toContain('Crude rates per 1,000 bed-days');
    expect(html).toMatch(/data-testid="overdispersion" data-ratio="[\d.]+"[^>]*>Overdispersion check: Pearson χ²/);
  });
});
