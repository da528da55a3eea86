/**
 * The subgroup screen's forest plot: the intervention's effect within each level (or at
 * each chosen point) of every screened modifier, grouped by modifier, one trace per
 * modifier so that each group has its own colour and legend entry.
 */
import type { Result } from '@/engine/boundary/schemas';
import { percentText } from '@/features/analyses/specWords';
import { formatInterval, formatP, measureInfo } from '../resultFormat';
import { screenEffectRows } from '../subgroupScreenView';
import { axis, baseLayout, capitalise, nullLine, PLOT_COLOURS, type PlotFigure, type PlotTrace } from './plotFigures';

const GROUP_COLOURS = [PLOT_COLOURS.intervention, PLOT_COLOURS.pooled, PLOT_COLOURS.boundary, PLOT_COLOURS.ink];

/** What the screen's forest plot reads from a result. */
export type ScreenPlotInput = Pick<Result, 'screen' | 'effectMeasure' | 'ciLevel' | 'exposure'>;

/** The forest plot figure, or null when the result is not a screen. */
export function screenForestFigure(result: ScreenPlotInput): PlotFigure | null {
  const screen = result.screen;
  if (!screen) return null;
  const measure = measureInfo(result);
  const ciText = `${percentText(result.ciLevel)} % CI`;
  const categories: string[] = [];
  const data: PlotTrace[] = screen.modifiers.map((entry, index) => {
    const rows = screenEffectRows(entry).filter((row) => row.estimate !== null);
    const labels = rows.map((row) => `${entry.column} · ${row.label}`);
    categories.push(...labels);
    const colour = GROUP_COLOURS[index % GROUP_COLOURS.length];
    return {
      type: 'scatter',
      mode: 'markers',
      name: `${entry.column} (interaction p ${formatP(entry.interaction.p)}, Holm ${formatP(entry.pAdjusted.holm)})`,
      x: rows.map((row) => row.estimate),
      y: labels,
      error_x: {
        type: 'data',
        symmetric: false,
        array: rows.map((row) => (row.upper !== null && row.estimate !== null ? row.upper - row.estimate : 0)),
        arrayminus: rows.map((row) => (row.lower !== null && row.estimate !== null ? row.estimate - row.lower : 0)),
        color: colour,
        thickness: 1.5,
        width: 0,
      },
      marker: { symbol: 'square', size: 9, color: colour },
      text: rows.map((row) => formatInterval(row.estimate, row.lower, row.upper, measure.kind)),
      hovertemplate: '%{y}: %{text}<extra></extra>',
    };
  });
  const layout = {
    ...baseLayout(),
    height: 120 + 36 * Math.max(categories.length, 2),
    showlegend: true,
    xaxis: axis(`${capitalise(measure.name)} (${ciText})${measure.ratio ? ', log scale' : ''}`, measure.ratio ? { type: 'log' } : {}),
    yaxis: axis('Modifier · level or point', { type: 'category', categoryorder: 'array', categoryarray: categories, autorange: 'reversed', showline: false, ticks: '' }),
    shapes: [nullLine('vertical', measure.nullValue)],
  };
  const listed = screen.modifiers
    .map((entry) => `${entry.column}: ${screenEffectRows(entry).map((row) => `${row.label} ${formatInterval(row.estimate, row.lower, row.upper, measure.kind)}`).join(', ')}`)
    .join('; ');
  const caption =
    `Forest plot of the ${measure.name} of ${result.exposure.column} = ${result.exposure.level} against ${result.exposure.reference}, grouped by the ${screen.examined} screened modifiers, ` +
    `with ${ciText}s${measure.ratio ? ' on a log scale' : ''}; the dotted line at ${measure.nullValue} marks no effect. ${listed}.`;
  return { title: `Subgroup screen: effect of ${result.exposure.column} by modifier`, caption, data, layout };
}
