import { beforeAll, describe, expect, it } from 'vitest';
import type { Result } from '@/engine/boundary/schemas';
import { CALL_BACK_SPEC, engineResult, UP_AND_ABOUT_SPEC } from '../testSupport';
import { PLOT_CONFIG, profileFigure, significanceBandFigure, stratumForestFigure } from './plotFigures';
import { narrowLayout } from './narrowLayout';

type Trace = { type: string; x: (number | string | null)[]; y: (number | string | null)[]; error_x?: { array: number[]; arrayminus: number[] }; fill?: string };

/** Trace types in plotly's basic bundle (node_modules/plotly.js-basic-dist registers scatter, bar and pie). */
const BASIC_TRACE_TYPES = ['scatter', 'bar', 'pie'];

describe('plot figures from real engine results', () => {
  let callBack: Result;
  let upAndAbout: Result;
  beforeAll(async () => {
    callBack = await engineResult('call-back', CALL_BACK_SPEC);
    upAndAbout = await engineResult('up-and-about', UP_AND_ABOUT_SPEC);
  });

  it('forest plot: each stratum effect with its limits, the pooled estimate, the null line at 1 on a log axis', () => {
    const figure = stratumForestFigure(callBack);
    const [strata, pooled] = figure.data as Trace[];
    expect(strata.y).toEqual(['18-44 (ref.)', '45-64', '65-79', '80+']);
    strata.y.forEach((label, index) => {
      const level = String(label).replace(' (ref.)', '');
      const effect = callBack.strata.find((entry) => entry.level === level)!.effect;
      expect(strata.x[index]).toBe(effect.estimate);
      // Error bars are distances from the estimate: upper − estimate and estimate − lower.
      expect(strata.error_x!.array[index]).toBeCloseTo(effect.upper! - effect.estimate!, 12);
      expect(strata.error_x!.arrayminus[index]).toBeCloseTo(effect.estimate! - effect.lower!, 12);
    });
    expect(pooled.x).toEqual([callBack.stratifiedTables!.mantelHaenszel.oddsRatio!.estimate]);
    const layout = figure.layout as { xaxis: { type?: string; title: { text: string } }; shapes: { x0: number }[]; paper_bgcolor: string };
    expect(layout.xaxis.type).toBe('log');
    expect(layout.xaxis.title.text).toBe('Odds ratio (95 % CI), log scale');
    expect(layout.shapes[0].x0).toBe(1);
    expect(layout.paper_bgcolor).toBe('#ffffff');
    expect(figure.caption).toContain('18-44 (ref.): 0.73');
    expect(figure.caption).toMatch(/^Forest plot of the odds ratio of call_back = 1 against 0 within each level of age_band/);
  });

  it('profile plot: the joint cells\' observed risks, one line per arm', () => {
    const figure = profileFigure(callBack);
    const traces = figure.data as Trace[];
    expect(traces).toHaveLength(2);
    traces.forEach((trace, arm) => {
      const exposure = arm === 0 ? '0' : '1';
      trace.x.forEach((level, index) => {
        const cell = callBack.joint!.cells.find((entry) => entry.exposure === exposure && entry.modifier === level)!;
        expect(trace.y[index]).toBeCloseTo(cell.risk! * 100, 12);
      });
    });
    expect((figure.layout as { yaxis: { title: { text: string } } }).yaxis.title.text).toBe('% with readmitted_30d = 1');
  });

  it('profile plot of a continuous modifier: predicted lines whose gap at each chosen value is the simple slope', () => {
    const figure = profileFigure(upAndAbout);
    const markers = (figure.data as Trace[]).filter((trace) => (trace as { mode?: string }).mode === 'markers');
    expect(markers).toHaveLength(2);
    // Linear model: the gap between the arms at x is b1 + b3·(x − c), the simple slope at x.
    upAndAbout.slopes!.forEach((slope, index) => {
      expect((markers[1].y[index] as number) - (markers[0].y[index] as number)).toBeCloseTo(slope.estimate!, 10);
      expect(markers[0].x[index]).toBe(slope.at);
    });
  });

  it('band plot: the band data, filled between the limits, with the observed range shaded and a 0 null line', () => {
    const figure = significanceBandFigure(upAndAbout)!;
    expect(figure).not.toBeNull();
    const [lower, upper, estimate] = figure.data as Trace[];
    expect(lower.y).toEqual(upAndAbout.band!.map((point) => point.lower));
    expect(upper.y).toEqual(upAndAbout.band!.map((point) => point.upper));
    expect(upper.fill).toBe('tonexty');
    expect(estimate.y).toEqual(upAndAbout.band!.map((point) => point.estimate));
    const layout = figure.layout as { shapes: { type: string; x0: number; x1: number; y0: number }[]; yaxis: { type?: string } };
    expect(layout.shapes[0]).toMatchObject({ type: 'rect', x0: upAndAbout.johnsonNeyman!.observed[0], x1: upAndAbout.johnsonNeyman!.observed[1] });
    expect(layout.shapes[1].y0).toBe(0);
    expect(layout.yaxis.type).toBeUndefined();
    expect(figure.caption).toContain("The intervention's effect is significant at the 5 % level across the whole observed range of frailty_score");
    expect(significanceBandFigure(callBack)).toBeNull();
  });

  it('marks Johnson-Neyman boundaries that fall in view', () => {
    // Boundaries moved into the observed range [1, 9] by hand: both must be drawn.
    const moved = { ...upAndAbout, johnsonNeyman: { ...upAndAbout.johnsonNeyman!, bounds: [2.5, 7.5] as [number, number], boundsInRange: [true, true] } };
    const figure = significanceBandFigure(moved)!;
    const lines = (figure.layout as { shapes: { type: string; x0: number }[] }).shapes.filter((shape) => shape.type === 'line' && shape.x0 !== 0);
    expect(lines.map((shape) => shape.x0)).toEqual([2.5, 7.5]);
  });

  it('uses only trace types of the basic bundle and our config', () => {
    const figures = [stratumForestFigure(callBack), profileFigure(callBack), profileFigure(upAndAbout), significanceBandFigure(upAndAbout)!];
    for (const figure of figures) for (const trace of figure.data) expect(BASIC_TRACE_TYPES).toContain(trace.type);
    expect(PLOT_CONFIG).toMatchObject({ displaylogo: false, responsive: true, showLink: false, showSendToCloud: false, showEditInChartStudio: false, plotlyServerURL: '' });
    expect(PLOT_CONFIG.modeBarButtonsToRemove).toContain('sendChartToCloud');
  });
});

describe('narrowLayout', () => {
  it('lays the legend flat under the plot, slims the margins and adds room below', () => {
    const wide = { height: 360, xaxis: { title: { text: 'Odds ratio', standoff: 8 }, type: 'log' }, font: { family: 'Noto Sans', size: 13 }, legend: { orientation: 'h', y: 1.02, yanchor: 'bottom' }, margin: { l: 72, r: 24, t: 40, b: 64 } };
    const narrow = narrowLayout(wide);
    expect(narrow.legend).toMatchObject({ orientation: 'h', y: -0.22, yanchor: 'top' });
    expect(narrow.margin).toEqual({ l: 44, r: 20, t: 28, b: 48 });
    expect(narrow.font).toEqual({ family: 'Noto Sans', size: 11 });
    expect(narrow.height).toBe(400);
    expect(narrow.xaxis).toEqual({ title: { text: 'Odds ratio', standoff: 8, font: { size: 10 } }, type: 'log', tickfont: { size: 10 } });
    // The wide layout is left as it was.
    expect(wide.legend.y).toBe(1.02);
  });
});
