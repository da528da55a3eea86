/**
 * The overlaid forest plot of a run comparison: each run's within-stratum effects (or
 * simple slopes) with their intervals, one colour and marker per run, strata matched by
 * level name and offset slightly so the intervals do not hide each other. Runs whose
 * effect measure is on another scale than the first run's (a ratio against a difference)
 * cannot share its axis: they are left out of the plot and the caption says so.
 */
import { percentText } from '@/features/analyses/specWords';
import { displayLevels, formatInterval, measureInfo } from '../resultFormat';
import type { PlotInput } from './plotInput';
import { PLOT_COLOURS, axis, baseLayout, capitalise, nullLine, type PlotFigure, type PlotTrace } from './plotFigures';

export type ComparisonForestInput = Pick<PlotInput, 'effectMeasure' | 'ciLevel' | 'exposure' | 'modifier' | 'strata' | 'slopes'>;

/** The part of a result the overlaid forest plot reads. */
export function comparisonForestInput(result: ComparisonForestInput): ComparisonForestInput {
  const { effectMeasure, ciLevel, exposure, modifier, strata, slopes } = result;
  return { effectMeasure, ciLevel, exposure, modifier, strata, slopes };
}

const RUN_STYLE = [
  { colour: PLOT_COLOURS.intervention, symbol: 'square' },
  { colour: PLOT_COLOURS.pooled, symbol: 'diamond' },
  { colour: PLOT_COLOURS.boundary, symbol: 'circle' },
  { colour: PLOT_COLOURS.ink, symbol: 'triangle-up' },
] as const;

interface Row { label: string; estimate: number | null; lower: number | null; upper: number | null }

function rowsOf(result: ComparisonForestInput): Row[] {
  if (result.modifier.type === 'categorical') {
    return displayLevels(result).map((level) => {
      const effect = result.strata.find((entry) => entry.level === level)?.effect;
      return { label: level, estimate: effect?.estimate ?? null, lower: effect?.lower ?? null, upper: effect?.upper ?? null };
    });
  }
  return (result.slopes ?? []).map((slope) => ({ label: slope.label, estimate: slope.estimate, lower: slope.lower, upper: slope.upper }));
}

/** The overlaid forest figure of runs named "Run A", "Run B", … (null when no run has strata to draw). */
export function comparisonForestFigure(runs: readonly { name: string; result: ComparisonForestInput }[]): PlotFigure | null {
  const first = runs[0];
  if (!first) return null;
  const measure = measureInfo(first.result);
  const drawn = runs.filter((run) => measureInfo(run.result).ratio === measure.ratio);
  const left = runs.filter((run) => !drawn.includes(run));
  const perRun = drawn.map((run) => ({ ...run, place: runs.indexOf(run), rows: rowsOf(run.result).filter((row) => row.estimate !== null) }));
  const labels: string[] = [];
  for (const run of perRun) for (const row of run.rows) if (!labels.includes(row.label)) labels.push(row.label);
  if (labels.length === 0) return null;
  const step = perRun.length > 1 ? 0.6 / (perRun.length - 1) : 0;
  const data: PlotTrace[] = perRun.map((run, index) => {
    const style = RUN_STYLE[run.place % RUN_STYLE.length];
    const kind = measureInfo(run.result).kind;
    return {
      type: 'scatter',
      mode: 'markers',
      name: `${run.name} (${run.result.effectMeasure})`,
      x: run.rows.map((row) => row.estimate),
      y: run.rows.map((row) => labels.indexOf(row.label) - 0.3 + index * step),
      error_x: {
        type: 'data',
        symmetric: false,
        array: run.rows.map((row) => (row.upper !== null && row.estimate !== null ? row.upper - row.estimate : 0)),
        arrayminus: run.rows.map((row) => (row.lower !== null && row.estimate !== null ? row.estimate - row.lower : 0)),
        color: style.colour,
        thickness: 1.5,
        width: 0,
      },
      marker: { symbol: style.symbol, size: 9, color: style.colour },
      text: run.rows.map((row) => `${run.name}, ${row.label}: ${run.result.effectMeasure} ${formatInterval(row.estimate, row.lower, row.upper, kind)}`),
      hovertemplate: '%{text}<extra></extra>',
    };
  });
  const column = first.result.modifier.column;
  const layout = {
    ...baseLayout(),
    height: 110 + 30 * labels.length * Math.max(perRun.length, 2),
    showlegend: true,
    xaxis: axis(`${measure.ratio ? 'Ratio measure' : 'Difference measure'} (${percentText(first.result.ciLevel)} % CI of each run)${measure.ratio ? ', log scale' : ''}`, measure.ratio ? { type: 'log' } : {}),
    yaxis: axis(column, {
      tickmode: 'array',
      tickvals: labels.map((_, i) => i),
      ticktext: labels,
      range: [labels.length - 0.5, -0.5],
      showline: false,
      ticks: '',
    }),
    shapes: [nullLine('vertical', measure.nullValue)],
  };
  const listed = perRun
    .map((run) => `${run.name} (${measureInfo(run.result).name}): ${run.rows.map((row) => `${row.label} ${formatInterval(row.estimate, row.lower, row.upper, measureInfo(run.result).kind)}`).join(', ')}`)
    .join('; ');
  const caption =
    `Overlaid forest plot of the effect of ${first.result.exposure.column} within each level of ${column}, one marker per run, ` +
    `with each run's intervals${measure.ratio ? ' on a log scale' : ''}; the dotted line at ${measure.nullValue} marks no effect. ${listed}.` +
    (left.length > 0 ? ` Not drawn (a measure on another scale than ${first.name}'s): ${left.map((run) => run.name).join(', ')}.` : '');
  return { title: capitalise(`effect of ${first.result.exposure.column} by ${column}, run by run`), caption, data, layout };
}
