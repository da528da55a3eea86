import { beforeAll, describe, expect, it } from 'vitest';
import type { Result } from '@/engine/boundary/schemas';
import { CALL_BACK_SPEC, engineResult, UP_AND_ABOUT_SPEC } from '../testSupport';
import { PLOT_CONFIG, profileFigure, stratumForestFigure } from './plotFigures';
import { effectCurveFigure } from './effectCurve';
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
    // The reference level's effect is a real estimate, so its row carries no reference mark.
    expect(strata.y).toEqual(['18-44', '45-64', '65-79', '80+']);
    strata.y.forEach((label, index) => {
      const level = String(label);
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
    expect(figure.caption).toContain('18-44: 0.73');
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

  it('effect curve: the band filled between the limits, the curve solid where the band leaves out 0, the marked points, thin data shaded, a 0 null line', () => {
    const figure = effectCurveFigure(upAndAbout)!;
    expect(figure).not.toBeNull();
    const [lower, upper, clear, unclear, marked] = figure.data as (Trace & { text?: string[] })[];
    expect(lower.y).toEqual(upAndAbout.band!.map((point) => point.lower));
    expect(upper.y).toEqual(upAndAbout.band!.map((point) => point.upper));
    expect(upper.fill).toBe('tonexty');
    upAndAbout.band!.forEach((point, index) => {
      const leavesOut = point.upper! < 0 || point.lower! > 0;
      if (leavesOut) expect(clear.y[index]).toBe(point.estimate);
      else expect(unclear.y[index]).toBe(point.estimate);
    });
    expect(marked.x).toEqual(upAndAbout.slopes!.map((slope) => slope.at));
    expect(marked.y).toEqual(upAndAbout.slopes!.map((slope) => slope.estimate));
    expect(marked.text).toEqual(['mild', 'moderate', 'severe']);
    const layout = figure.layout as { shapes: { type: string; x0: number; x1: number; y0: number }[]; yaxis: { type?: string } };
    const thin = layout.shapes.filter((shape) => shape.type === 'rect');
    if (upAndAbout.spread!.p5 > upAndAbout.modifier.observed![0]) expect(thin[0]).toMatchObject({ x0: upAndAbout.modifier.observed![0], x1: upAndAbout.spread!.p5 });
    expect(layout.shapes.find((shape) => shape.type === 'line' && shape.y0 === 0)).toBeTruthy();
    expect(layout.yaxis.type).toBeUndefined();
    expect(figure.caption).toContain("The intervention's effect is distinguishable from no effect at the 5 % level across the whole observed range of frailty_score");
    expect(effectCurveFigure(callBack)).toBeNull();
  });

  it('marks both Johnson-Neyman boundaries: drawn when in view, named at the edge when beyond the data', () => {
    // Boundaries set by hand: both inside the observed range [1, 9], then one far beyond it.
    const inside = { ...upAndAbout, johnsonNeyman: { ...upAndAbout.johnsonNeyman!, bounds: [2.5, 7.5] as [number, number], significant: 'outside' as const, boundsInRange: [true, true] } };
    const lines = (effectCurveFigure(inside)!.layout as { shapes: { type: string; x0: number }[] }).shapes.filter((shape) => shape.type === 'line' && shape.x0 !== 0);
    expect(lines.map((shape) => shape.x0)).toEqual([2.5, 7.5]);
    const beyond = { ...upAndAbout, johnsonNeyman: { ...upAndAbout.johnsonNeyman!, bounds: [4.2, 30] as [number, number], significant: 'outside' as const, boundsInRange: [true, false] } };
    const figure = effectCurveFigure(beyond)!;
    const layout = figure.layout as { shapes: { type: string; x0: number }[]; annotations: { text: string }[] };
    expect(layout.shapes.filter((shape) => shape.type === 'line' && shape.x0 !== 0).map((shape) => shape.x0)).toEqual([4.2]);
    expect(layout.annotations.map((note) => note.text)).toContain('upper boundary at 30.0, beyond the data →');
    expect(figure.caption).toContain('The upper Johnson-Neyman boundary, 30.0, lies above the largest observed frailty_score');
  });

  it('uses only trace types of the basic bundle and our config', () => {
    const figures = [stratumForestFigure(callBack), profileFigure(callBack), profileFigure(upAndAbout), effectCurveFigure(upAndAbout)!];
    for (const figure of figures) for (const trace of figure.data) expect(BASIC_TRACE_TYPES).toContain(trace.type);
    expect(PLOT_CONFIG).toMatchObject({ displayModeBar: false, displaylogo: false, responsive: true, showLink: false, showSendToCloud: false, showEditInChartStudio: false, plotlyServerURL: '' });
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
