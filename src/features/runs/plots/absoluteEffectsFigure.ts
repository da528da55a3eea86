/**
 * The absolute-effects plot: within each modifier level, the standardized risk with the
 * intervention set to each arm (two markers with their intervals), so that the gap between
 * them is the risk difference the table reports with its NNT. Scatter traces only (plotly's
 * basic bundle), our colours and config (plotFigures.ts).
 */
import { percentText } from '@/features/analyses/specWords';
import { nntText } from '../absoluteEffectsView';
import { displayLevels, formatInterval } from '../resultFormat';
import type { PlotInput } from './plotInput';
import { PLOT_COLOURS, axis, baseLayout, type PlotFigure, type PlotTrace } from './plotFigures';

export function absoluteEffectsFigure(result: PlotInput): PlotFigure | null {
  const standardized = result.standardized ?? null;
  if (standardized === null) return null;
  const order = displayLevels(result);
  const entries = [...standardized.levels].sort((a, b) => order.indexOf(a.level) - order.indexOf(b.level));
  const ciText = `${percentText(result.ciLevel)} % CI`;
  const labels = entries.map((entry) => `${entry.level}${entry.level === standardized.reference ? ' (ref.)' : ''}`);
  const arms = [
    { name: `${result.exposure.column} = ${result.exposure.reference}`, risk: (entry: (typeof entries)[number]) => entry.riskUnexposed, colour: PLOT_COLOURS.control, symbol: 'circle-open' },
    { name: `${result.exposure.column} = ${result.exposure.level}`, risk: (entry: (typeof entries)[number]) => entry.riskExposed, colour: PLOT_COLOURS.intervention, symbol: 'circle' },
  ];
  const data: PlotTrace[] = arms.map((arm) => {
    const risks = entries.map(arm.risk);
    const percent = (value: number | null) => (value === null ? null : 100 * value);
    return {
      type: 'scatter',
      mode: 'markers',
      name: arm.name,
      x: risks.map((risk) => percent(risk.estimate)),
      y: labels,
      error_x: {
        type: 'data',
        symmetric: false,
        array: risks.map((risk) => (risk.upper !== null && risk.estimate !== null ? 100 * (risk.upper - risk.estimate) : 0)),
        arrayminus: risks.map((risk) => (risk.lower !== null && risk.estimate !== null ? 100 * (risk.estimate - risk.lower) : 0)),
        color: arm.colour,
        thickness: 1.5,
        width: 0,
      },
      marker: { symbol: arm.symbol, size: 10, color: arm.colour, line: { width: 2, color: arm.colour } },
      text: entries.map((entry, k) => `${formatInterval(risks[k].estimate, risks[k].lower, risks[k].upper, 'percent')}; RD ${formatInterval(entry.riskDifference.estimate, entry.riskDifference.lower, entry.riskDifference.upper, 'risk-difference')}; NNT ${nntText(entry.nnt)}`),
      hovertemplate: `${arm.name}, %{y}: %{text}<extra></extra>`,
    };
  });
  const layout = {
    ...baseLayout(),
    height: 80 + 44 * Math.max(entries.length, 2),
    showlegend: true,
    xaxis: axis(`Standardized risk of ${result.outcome.column}, % (${ciText})`, { rangemode: 'tozero' }),
    yaxis: axis(result.modifier.column, { type: 'category', categoryorder: 'array', categoryarray: labels, autorange: 'reversed', showline: false, ticks: '' }),
  };
  const listed = entries
    .map((entry, k) => `${labels[k]}: ${formatInterval(entry.riskUnexposed.estimate, entry.riskUnexposed.lower, entry.riskUnexposed.upper, 'percent')} without, ${formatInterval(entry.riskExposed.estimate, entry.riskExposed.lower, entry.riskExposed.upper, 'percent')} with; NNT ${nntText(entry.nnt)}`)
    .join('; ');
  const caption =
    `Standardized risk of ${result.outcome.column} within each level of ${result.modifier.column}, with ${result.exposure.column} set to ${result.exposure.reference} (open circles) and to ${result.exposure.level} (filled), with ${ciText}s; ` +
    `the gap between the two is the risk difference. ${listed}.`;
  return { title: `Absolute effect of ${result.exposure.column} by ${result.modifier.column}`, caption, data, layout };
}
