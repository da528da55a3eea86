/**
 * The effect curve of a continuous modifier: the intervention's effect across the
 * observed range with its pointwise band (solid where the band leaves out no effect,
 * dotted where it does not), the points clinicians name (or percentiles) marked on it,
 * the stretches where the data are thin shaded, and both Johnson-Neyman boundaries, each
 * drawn where it falls within the observed range or named at the edge when it lies beyond the data.
 */
import type { PlotInput } from './plotInput';
import { percentText } from '@/features/analyses/specWords';
import { fixed, formatInterval, measureInfo, modifierDecimals } from '../resultFormat';
import { effectRangeInWords } from '../continuousWords';
import { PLOT_COLOURS, axis, baseLayout, capitalise, nullLine, type PlotFigure, type PlotShape, type PlotTrace } from './plotFigures';

const THIN_FILL = 'rgba(143, 136, 119, 0.16)';

/** Null when the result has no band (categorical modifiers). */
export function effectCurveFigure(result: PlotInput): PlotFigure | null {
  const band = result.band;
  const jn = result.johnsonNeyman;
  if (!band || band.length === 0 || !jn) return null;
  const measure = measureInfo(result);
  const ciText = `${percentText(result.ciLevel)} %`;
  const points = band.filter((point) => point.estimate !== null && point.lower !== null && point.upper !== null);
  const [min, max] = jn.observed;
  const pad = (max - min) * 0.06 || 0.5;
  const view: [number, number] = [min - pad, max + pad];
  const decimals = modifierDecimals(jn.observed);
  const show = (value: number) => fixed(value, decimals);
  const words = effectRangeInWords(jn, { modifier: result.modifier.column, alpha: result.alpha, spread: result.spread });
  const clear = points.map((point) => (point.lower as number) > measure.nullValue || (point.upper as number) < measure.nullValue);
  // Each segment belongs to the style of its ends; a segment between a clear and an unclear point is drawn in both.
  const segment = (wanted: boolean) => points.map((point, i) => (clear[i] === wanted || clear[i - 1] === wanted || clear[i + 1] === wanted ? point.estimate : null));
  const effectName = `${capitalise(measure.name)} of ${result.exposure.column} = ${result.exposure.level}`;
  const data: PlotTrace[] = [
    { type: 'scatter', mode: 'lines', name: `${ciText} band (lower)`, x: points.map((point) => point.x), y: points.map((point) => point.lower), line: { width: 0, color: PLOT_COLOURS.intervention }, showlegend: false, hoverinfo: 'skip' },
    {
      type: 'scatter', mode: 'lines', name: `${ciText} band`, x: points.map((point) => point.x), y: points.map((point) => point.upper),
      fill: 'tonexty', fillcolor: PLOT_COLOURS.band, line: { width: 0, color: PLOT_COLOURS.intervention }, hoverinfo: 'skip',
    },
    {
      type: 'scatter', mode: 'lines', name: 'Distinguishable from no effect', x: points.map((point) => point.x), y: segment(true),
      line: { color: PLOT_COLOURS.intervention, width: 3 }, connectgaps: false,
      text: points.map((point) => formatInterval(point.estimate, point.lower, point.upper, measure.kind)),
      hovertemplate: `${result.modifier.column} %{x:.${decimals}f}: %{text}<extra></extra>`,
    },
    {
      type: 'scatter', mode: 'lines', name: 'Band includes no effect', x: points.map((point) => point.x), y: segment(false),
      line: { color: PLOT_COLOURS.intervention, width: 2, dash: 'dot' }, connectgaps: false,
      text: points.map((point) => formatInterval(point.estimate, point.lower, point.upper, measure.kind)),
      hovertemplate: `${result.modifier.column} %{x:.${decimals}f}: %{text}<extra></extra>`,
    },
  ];
  const slopes = (result.slopes ?? []).filter((slope) => slope.estimate !== null);
  if (slopes.length > 0) {
    data.push({
      type: 'scatter', mode: 'markers+text', name: 'Marked points', x: slopes.map((slope) => slope.at), y: slopes.map((slope) => slope.estimate),
      marker: { color: '#ffffff', size: 10, line: { color: PLOT_COLOURS.ink, width: 2 } },
      text: slopes.map((slope) => slope.label), textposition: 'top center', textfont: { size: 11, color: PLOT_COLOURS.ink },
      customdata: slopes.map((slope) => `${show(slope.at)}: ${formatInterval(slope.estimate, slope.lower, slope.upper, measure.kind)}`),
      hovertemplate: '%{text} (%{customdata})<extra></extra>',
    });
  }
  const shapes: PlotShape[] = [
    ...words.thin.map(([from, to]): PlotShape => ({ type: 'rect', xref: 'x', yref: 'paper', x0: from, x1: to, y0: 0, y1: 1, fillcolor: THIN_FILL, line: { width: 0 }, layer: 'below' })),
    nullLine('horizontal', measure.nullValue),
  ];
  const annotations: Record<string, unknown>[] = [];
  if (words.thin.length > 0) {
    const [from, to] = words.thin[0];
    annotations.push({ xref: 'x', yref: 'paper', x: (from + to) / 2, y: 0.98, yanchor: 'top', text: 'thin data', showarrow: false, font: { size: 10, color: PLOT_COLOURS.inkMuted } });
  }
  const bounds = jn.bounds ?? [];
  bounds.forEach((bound, index) => {
    const which = bounds.length === 2 ? (index === 0 ? 'lower boundary' : 'upper boundary') : 'boundary';
    if (bound >= min && bound <= max) {
      shapes.push({ type: 'line', xref: 'x', yref: 'paper', x0: bound, x1: bound, y0: 0, y1: 1, line: { color: PLOT_COLOURS.boundary, width: 1.5, dash: 'dash' } });
      annotations.push({ xref: 'x', yref: 'paper', x: bound, y: index === 0 ? 0.02 : 0.1, xanchor: 'left', yanchor: 'bottom', text: ` ${which} ${show(bound)}`, showarrow: false, font: { size: 11, color: PLOT_COLOURS.boundary } });
    } else {
      const below = bound < min;
      annotations.push({
        xref: 'paper', yref: 'paper', x: below ? 0 : 1, y: index === 0 ? 0.02 : 0.1, xanchor: below ? 'left' : 'right', yanchor: 'bottom',
        text: below ? `← ${which} at ${show(bound)}, below the data` : `${which} at ${show(bound)}, beyond the data →`, showarrow: false, font: { size: 11, color: PLOT_COLOURS.boundary },
      });
    }
  });
  if (bounds.some((bound) => bound >= min && bound <= max)) {
    data.push({ type: 'scatter', mode: 'lines', name: 'Johnson-Neyman boundary', x: [null], y: [null], line: { color: PLOT_COLOURS.boundary, dash: 'dash', width: 1.5 }, hoverinfo: 'skip' });
  }
  const layout = {
    ...baseLayout(),
    height: 400,
    xaxis: axis(result.modifier.column, { range: view }),
    yaxis: axis(`${effectName}${measure.ratio ? ', log scale' : ''}`, measure.ratio ? { type: 'log' } : {}),
    shapes,
    annotations,
  };
  const marked = slopes.map((slope) => `${slope.label} (${show(slope.at)}): ${formatInterval(slope.estimate, slope.lower, slope.upper, measure.kind)}`).join('; ');
  const caption =
    `Effect curve: the ${measure.name} of ${result.exposure.column} = ${result.exposure.level} against ${result.exposure.reference} across the observed range of ${result.modifier.column} (${show(min)} to ${show(max)}), ` +
    `with its ${ciText} pointwise band; the line is solid where the band leaves out no effect and dotted where it does not, and the dotted line at ${measure.nullValue} marks no effect` +
    `${words.thin.length > 0 ? '; shaded stretches hold few patients' : ''}. ${marked ? `Marked: ${marked}. ` : ''}${words.sentence}` +
    (words.boundaries.length > 0 ? ` ${words.boundaries.map((boundary) => boundary.text).join(' ')}` : '');
  return { title: `Effect of ${result.exposure.column} across ${result.modifier.column}`, caption, data, layout };
}
