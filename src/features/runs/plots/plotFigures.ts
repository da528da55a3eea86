/**
 * The data and layout of Crossgrain's result plots (the effect curve is in effectCurve.ts), built from the engine's result
 * alone (pure: no React, no plotly), plus the text alternative of each. Only scatter
 * traces are used, which the plotly basic bundle includes: error_x for intervals,
 * fill "tonexty" for bands, layout shapes for the null line, boundaries and ranges.
 */
import type { PlotInput } from './plotInput';
import { percentText } from '@/features/analyses/specWords';
import { displayLevels, fixed, formatInterval, formatNumber, measureInfo, modifierDecimals } from '../resultFormat';
import { predictionNote } from '../doseTrendView';

/** Our palette (src/styles/global.css), as plotly needs literal colours. */
export const PLOT_COLOURS = {
  ink: '#18232b',
  inkMuted: '#5d6b74',
  rule: '#d6d0c1',
  control: '#8f8877',
  intervention: '#22536b',
  pooled: '#7a520a',
  band: 'rgba(63, 118, 144, 0.18)',
  boundary: '#b4472f',
  observed: '#f4f2ec',
} as const;

export type PlotTrace = Record<string, unknown>;
export type PlotShape = Record<string, unknown>;

export interface PlotFigure {
  /** Short heading above the plot. */
  title: string;
  /** The text alternative: what the plot shows, with its numbers. */
  caption: string;
  data: PlotTrace[];
  layout: Record<string, unknown>;
}

/**
 * The config every plot uses. Nothing of a page may leave the machine: no share or
 * hosted-editor button, no link out, no logo, and no server address to send a chart to.
 * plotly's own toolbar is hidden: the plot frame (PlotFrame.tsx) has Crossgrain's
 * (download PNG or SVG, reset view); dragging still zooms and a double click resets.
 */
export const PLOT_CONFIG = {
  displayModeBar: false,
  displaylogo: false,
  responsive: true,
  showLink: false,
  showSendToCloud: false,
  showEditInChartStudio: false,
  showSources: false,
  plotlyServerURL: '',
  linkText: '',
  modeBarButtonsToRemove: ['select2d', 'lasso2d', 'sendChartToCloud', 'sendDataToCloud', 'editInChartStudio', 'downloadJson'],
} as const;

export function baseLayout(): Record<string, unknown> {
  return {
    font: { family: "'Noto Sans', ui-sans-serif, system-ui, sans-serif", size: 13, color: PLOT_COLOURS.ink },
    paper_bgcolor: '#ffffff',
    plot_bgcolor: '#ffffff',
    margin: { l: 72, r: 24, t: 40, b: 64 },
    hoverlabel: { font: { family: "'Noto Sans', sans-serif" } },
    legend: { orientation: 'h', x: 0, xanchor: 'left', y: 1.02, yanchor: 'bottom', font: { size: 12 } },
  };
}

export function axis(title: string, extra: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    title: { text: title, standoff: 8 },
    showgrid: false,
    zeroline: false,
    showline: true,
    linecolor: PLOT_COLOURS.rule,
    ticks: 'outside',
    tickcolor: PLOT_COLOURS.rule,
    automargin: true,
    ...extra,
  };
}

export function nullLine(orientation: 'vertical' | 'horizontal', value: number): PlotShape {
  const line = { color: PLOT_COLOURS.inkMuted, width: 1, dash: 'dot' };
  return orientation === 'vertical'
    ? { type: 'line', xref: 'x', yref: 'paper', x0: value, x1: value, y0: 0, y1: 1, line, layer: 'below' }
    : { type: 'line', xref: 'paper', yref: 'y', x0: 0, x1: 1, y0: value, y1: value, line, layer: 'below' };
}

/** "odds ratio of call_back = 1 against 0" */
function effectName(result: PlotInput): string {
  if (result.exposure.type === 'continuous') return `${measureInfo(result).name} per unit of ${result.exposure.column}`;
  return `${measureInfo(result).name} of ${result.exposure.column} = ${result.exposure.level} against ${result.exposure.reference}`;
}

export function capitalise(text: string): string {
  return text.charAt(0).toUpperCase() + text.slice(1);
}

interface ForestRow {
  label: string;
  estimate: number | null;
  lower: number | null;
  upper: number | null;
}

/**
 * Stratum forest plot: the intervention's effect within each modifier level (or at each
 * simple-slope value of a continuous modifier) with its interval, the Mantel-Haenszel
 * pooled estimate where the result has one, and the null line (1 on a log axis for
 * ratios, 0 for differences).
 */
export function stratumForestFigure(result: PlotInput): PlotFigure {
  const measure = measureInfo(result);
  const ciText = `${percentText(result.ciLevel)} % CI`;
  const decimals = modifierDecimals(result.modifier.observed);
  const rows: ForestRow[] =
    result.modifier.type === 'categorical'
      ? displayLevels(result).map((level) => {
          const stratum = result.strata.find((entry) => entry.level === level);
          return { label: level, estimate: stratum?.effect.estimate ?? null, lower: stratum?.effect.lower ?? null, upper: stratum?.effect.upper ?? null };
        })
      : (result.slopes ?? []).map((slope) => ({ label: `${slope.label} (${fixed(slope.at, decimals)})`, estimate: slope.estimate, lower: slope.lower, upper: slope.upper }));
  const shown = rows.filter((row) => row.estimate !== null);
  const data: PlotTrace[] = [
    {
      type: 'scatter',
      mode: 'markers',
      name: result.modifier.type === 'categorical' ? `Within each level of ${result.modifier.column}` : `At chosen values of ${result.modifier.column}`,
      x: shown.map((row) => row.estimate),
      y: shown.map((row) => row.label),
      error_x: {
        type: 'data',
        symmetric: false,
        array: shown.map((row) => (row.upper !== null && row.estimate !== null ? row.upper - row.estimate : 0)),
        arrayminus: shown.map((row) => (row.lower !== null && row.estimate !== null ? row.estimate - row.lower : 0)),
        color: PLOT_COLOURS.intervention,
        thickness: 1.5,
        width: 0,
      },
      marker: { symbol: 'square', size: 9, color: PLOT_COLOURS.intervention },
      text: shown.map((row) => formatInterval(row.estimate, row.lower, row.upper, measure.kind)),
      hovertemplate: '%{y}: %{text}<extra></extra>',
    },
  ];
  const pooledLabel = 'All levels, crude';
  const mh = result.stratifiedTables?.mantelHaenszel;
  const pooled = mh ? (measure.code === 'OR' ? mh.oddsRatio : measure.code === 'RR' ? mh.riskRatio : measure.code === 'RD' ? mh.riskDifference : null) : null;
  if (pooled && pooled.estimate !== null) {
    data.push({
      type: 'scatter',
      mode: 'markers',
      name: 'Crude cross-check: all levels pooled, no covariates (Mantel-Haenszel)',
      x: [pooled.estimate],
      y: [pooledLabel],
      error_x: {
        type: 'data',
        symmetric: false,
        array: [pooled.upper !== null ? pooled.upper - pooled.estimate : 0],
        arrayminus: [pooled.lower !== null ? pooled.estimate - pooled.lower : 0],
        color: PLOT_COLOURS.pooled,
        thickness: 1.5,
        width: 0,
      },
      marker: { symbol: 'diamond', size: 12, color: PLOT_COLOURS.pooled },
      text: [formatInterval(pooled.estimate, pooled.lower, pooled.upper, measure.kind)],
      hovertemplate: '%{y}: %{text}<extra></extra>',
    });
  }
  const categories = [...shown.map((row) => row.label), ...(pooled && pooled.estimate !== null ? [pooledLabel] : [])];
  const layout = {
    ...baseLayout(),
    height: 80 + 44 * Math.max(categories.length, 2),
    showlegend: data.length > 1,
    xaxis: axis(`${capitalise(measure.name)} (${ciText})${measure.ratio ? ', log scale' : ''}`, measure.ratio ? { type: 'log' } : {}),
    yaxis: axis(result.modifier.column, {
      type: 'category',
      categoryorder: 'array',
      categoryarray: categories,
      autorange: 'reversed',
      showline: false,
      ticks: '',
    }),
    shapes: [nullLine('vertical', measure.nullValue)],
  };
  const listed = rows.map((row) => `${row.label}: ${formatInterval(row.estimate, row.lower, row.upper, measure.kind)}`).join('; ');
  const caption =
    `Forest plot of the ${effectName(result)} ${result.modifier.type === 'categorical' ? `within each level of ${result.modifier.column}` : `at chosen values of ${result.modifier.column}`}, ` +
    `with ${ciText}s${measure.ratio ? ' on a log scale' : ''}; the dotted line at ${measure.nullValue} marks no effect. ${listed}.` +
    (pooled && pooled.estimate !== null ? ` Crude cross-check, all levels pooled without covariates (Mantel-Haenszel): ${formatInterval(pooled.estimate, pooled.lower, pooled.upper, measure.kind)}.` : '');
  return { title: `Effect of ${result.exposure.column} by ${result.modifier.column}`, caption, data, layout };
}

/**
 * Profile plot: the outcome by modifier level, one line per arm. Categorical modifiers
 * with a binary intervention use the joint cells' observed proportions (or means);
 * otherwise the lines are the engine's predictions (result.predictions): the model's
 * predicted outcome per arm (or at the dose's mean and ± 1 SD) across the modifier, with
 * the covariates held at the values the result states (continuous at their means,
 * categorical at their most common level), marking the chosen simple-slope values.
 */
export function profileFigure(result: PlotInput): PlotFigure {
  const binary = result.outcome.type === 'binary';
  const outcomeColumn = result.outcome.column;
  const arms = [result.exposure.reference, result.exposure.level];
  const armName = (arm: string) => `${result.exposure.column} = ${arm}`;
  const colours = [PLOT_COLOURS.control, PLOT_COLOURS.intervention];

  if (result.modifier.type === 'categorical' && result.joint) {
    const levels = displayLevels(result);
    const data: PlotTrace[] = arms.map((arm, index) => {
      const cells = levels.map((level) => result.joint?.cells.find((cell) => cell.modifier === level && cell.exposure === arm));
      const values = cells.map((cell) => (cell ? (binary ? (cell.risk === null ? null : cell.risk * 100) : cell.mean) : null));
      return {
        type: 'scatter',
        mode: 'lines+markers',
        name: armName(arm),
        x: levels,
        y: values,
        line: { color: colours[index], width: 2.5, dash: index === 0 ? 'dash' : 'solid' },
        marker: { color: colours[index], size: 9, symbol: index === 0 ? 'circle-open' : 'circle' },
        text: cells.map((cell) => (cell ? (binary ? `${cell.events} of ${cell.n}` : `n = ${cell.n}`) : '')),
        hovertemplate: `${armName(arm)}, %{x}: %{y:.${binary ? 1 : 2}f}${binary ? ' %' : ''} (%{text})<extra></extra>`,
      };
    });
    const yTitle = binary ? `% with ${outcomeColumn} = ${result.outcome.event ?? '1'}` : `Mean ${outcomeColumn}`;
    const layout = {
      ...baseLayout(),
      height: 360,
      xaxis: axis(result.modifier.column, { type: 'category', categoryorder: 'array', categoryarray: levels }),
      yaxis: axis(yTitle, { rangemode: binary ? 'tozero' : 'normal' }),
    };
    const listed = arms
      .map((arm, index) => {
        const values = data[index].y as (number | null)[];
        const shown = levels.map((level, k) => `${level} ${binary ? formatNumber(values[k] === null ? null : values[k] / 100, 'percent') : formatNumber(values[k], 'mean')}`);
        return `${armName(arm)}: ${shown.join(', ')}`;
      })
      .join('; ');
    const caption =
      `Profile plot of the observed ${binary ? `proportion with ${outcomeColumn} = ${result.outcome.event ?? '1'}` : `mean ${outcomeColumn}`} in each level of ${result.modifier.column}, one line per arm (crude, not adjusted). ` +
      `${listed}. Lines that are not parallel suggest that the intervention's effect differs between levels on the ${binary ? 'risk-difference' : 'mean-difference'} scale.`;
    return { title: `${binary ? 'Observed risk' : 'Observed mean'} by ${result.modifier.column} and arm`, caption, data, layout };
  }
  return predictedProfileFigure(result);
}

/** Inverse link: the linear predictor to the outcome scale. */
function inverseLink(link: PlotInput['model']['link'], eta: number): number {
  if (link === 'logit') return 1 / (1 + Math.exp(-eta));
  if (link === 'log') return Math.exp(eta);
  return eta;
}

type PredictedLine = NonNullable<PlotInput['predictions']>['lines'][number];

/**
 * A predicted line's value at modifier value x: the linear predictor is linear in x along
 * a line (the covariates and the intervention held), so it is read off exactly from the
 * line's first and last points and mapped through the inverse link.
 */
function lineAt(line: PredictedLine, link: PlotInput['model']['link'], x: number): number | null {
  const first = line.points[0];
  const last = line.points[line.points.length - 1];
  if (first.x === null || last.x === null || first.linearPredictor === null || last.linearPredictor === null || last.x === first.x) return null;
  return inverseLink(link, first.linearPredictor + ((last.linearPredictor - first.linearPredictor) * (x - first.x)) / (last.x - first.x));
}

/** The profile plot drawn from the engine's predictions at stated covariate values. */
function predictedProfileFigure(result: PlotInput): PlotFigure {
  const binary = result.outcome.type === 'binary';
  const outcomeColumn = result.outcome.column;
  const predictions = result.predictions;
  const scale = binary ? 100 : 1;
  const categorical = result.modifier.type === 'categorical';
  const lines = predictions?.lines ?? [];
  const colours = lines.length === 2 ? [PLOT_COLOURS.control, PLOT_COLOURS.intervention] : [PLOT_COLOURS.control, PLOT_COLOURS.pooled, PLOT_COLOURS.intervention];
  const slopes = categorical ? [] : (result.slopes ?? []);
  const data: PlotTrace[] = lines.map((line, index) => ({
    type: 'scatter',
    mode: categorical ? 'lines+markers' : 'lines',
    name: line.label,
    x: line.points.map((point) => (categorical ? point.level : point.x)),
    y: line.points.map((point) => (point.estimate === null ? null : point.estimate * scale)),
    line: { color: colours[index % colours.length], width: 2.5, dash: index === 0 ? 'dash' : 'solid' },
    hovertemplate: `${line.label}, ${result.modifier.column} %{x}: %{y:.2f}<extra></extra>`,
  }));
  if (slopes.length > 0) {
    lines.forEach((line, index) => {
      data.push({
        type: 'scatter',
        mode: 'markers',
        name: `${line.label} at the chosen values`,
        showlegend: false,
        x: slopes.map((slope) => slope.at),
        y: slopes.map((slope) => {
          const value = lineAt(line, result.model.link, slope.at);
          return value === null ? null : value * scale;
        }),
        marker: { color: colours[index % colours.length], size: 9, symbol: index === 0 ? 'circle-open' : 'circle' },
        text: slopes.map((slope) => slope.label),
        hovertemplate: `${line.label}, %{text}: %{y:.2f}<extra></extra>`,
      });
    });
  }
  const yTitle = binary ? `% with ${outcomeColumn} = ${result.outcome.event ?? '1'}` : outcomeColumn;
  const layout = {
    ...baseLayout(),
    height: 360,
    xaxis: axis(result.modifier.column, categorical ? { type: 'category' } : {}),
    yaxis: axis(yTitle),
  };
  const observed = result.modifier.observed ?? [0, 1];
  const decimals = modifierDecimals(observed);
  const listed = categorical
    ? lines.map((line) => `${line.label}: ${line.points.map((point) => `${point.level} ${fixed(point.estimate === null ? null : point.estimate * scale, 2)}`).join(', ')}`).join('; ')
    : slopes
        .map((slope) => `${slope.label} (${fixed(slope.at, decimals)}): ${lines.map((line) => { const value = lineAt(line, result.model.link, slope.at); return `${line.label} ${fixed(value === null ? null : value * scale, 2)}`; }).join(', ')}`)
        .join('; ');
  const held = predictionNote(result) ?? 'This result was made before the engine recorded predictions at stated covariate values; re-run the analysis to draw the predicted lines.';
  const where = categorical ? `in each level of ${result.modifier.column}` : `across ${result.modifier.column} from ${fixed(observed[0], decimals)} to ${fixed(observed[1], decimals)}`;
  const caption =
    `Profile plot of the model's predicted ${binary ? 'proportion with the outcome (%)' : outcomeColumn} ${where}, one line per ${lines.length === 2 ? 'arm' : 'dose (mean and ± 1 SD)'}. ${held} ` +
    `${listed ? `${listed}. ` : ''}The gap between the lines is the intervention's effect; lines that are not parallel show that it changes with ${result.modifier.column}.`;
  return { title: `Predicted ${outcomeColumn} ${categorical ? 'by' : 'across'} ${result.modifier.column}`, caption, data, layout };
}
