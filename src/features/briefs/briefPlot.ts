/**
 * The geometry of a brief's one plot, shared by the page (SVG) and the PDF (pdfkit
 * vectors): one row per stratum (or per modifier value), a point at the estimate, a line
 * over the interval, a dashed line at no effect, and ticks on a log scale for ratios.
 */
import { formatNumber } from '../runs/resultFormat';
import type { BriefPlot } from './briefContent';

export interface PlotLayout {
  width: number;
  height: number;
  labelWidth: number;
  rowHeight: number;
  top: number;
  x: (value: number) => number;
  ticks: { value: number; x: number; text: string }[];
  nullX: number;
  rows: { y: number; label: string; point: number; lower: number; upper: number; hover: string; small: boolean }[];
}

export function plotLayout(plot: BriefPlot, width: number): PlotLayout {
  const labelWidth = Math.min(180, width * 0.3);
  const rowHeight = 26;
  const top = 10;
  const right = 16;
  const transform = (value: number) => (plot.logScale ? Math.log(value) : value);
  const values = plot.points.flatMap((point) => [point.lower, point.upper, point.estimate]).concat(plot.nullValue)
    .filter((value) => Number.isFinite(value) && (!plot.logScale || value > 0)).map(transform);
  let low = Math.min(...values);
  let high = Math.max(...values);
  if (!(high > low)) { low -= 1; high += 1; }
  const pad = (high - low) * 0.06;
  low -= pad;
  high += pad;
  const span = width - labelWidth - right;
  const clampT = (t: number) => Math.min(Math.max(t, low), high);
  const x = (value: number) => labelWidth + ((clampT(transform(value)) - low) / (high - low)) * span;
  const tickValues = plot.logScale ? logTicks(Math.exp(low), Math.exp(high)) : linearTicks(low, high);
  const rows = plot.points.map((point, index) => ({
    y: top + rowHeight * index + rowHeight / 2, label: point.label, point: x(point.estimate), lower: x(point.lower), upper: x(point.upper),
    hover: point.hover, small: point.small,
  }));
  const kind = plot.logScale ? 'ratio' : 'difference';
  return {
    width, height: top + rowHeight * plot.points.length + 34, labelWidth, rowHeight, top, x,
    ticks: tickValues.map((value) => ({ value, x: x(value), text: formatNumber(value, kind) })), nullX: x(plot.nullValue), rows,
  };
}

function logTicks(low: number, high: number): number[] {
  const candidates = [0.05, 0.1, 0.2, 0.25, 0.5, 1, 2, 4, 5, 10, 20];
  const inside = candidates.filter((value) => value >= low && value <= high);
  return inside.length > 6 ? inside.filter((_, index) => index % 2 === 0) : inside;
}

function linearTicks(low: number, high: number): number[] {
  const raw = (high - low) / 4;
  const magnitude = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * magnitude).find((candidate) => candidate >= raw) ?? raw;
  const ticks: number[] = [];
  for (let value = Math.ceil(low / step) * step; value <= high + 1e-12; value += step) ticks.push(Number(value.toFixed(10)));
  return ticks;
}
