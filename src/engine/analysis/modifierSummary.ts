import type { AnalysisFrame } from '../design/analysisFrame.js';
import { quantileType7 } from '../measures/simpleSlopes.js';
import type { AnalysisSpec } from '../types.js';

/** Centre, mean, SD, range and sorted values of a continuous modifier (nulls for a categorical one). */
export interface ModifierSummary {
  centre: number;
  mean: number | null;
  sd: number | null;
  observed: [number, number] | null;
  median: number | null;
  sorted: Float64Array | null;
}

/** Summarises the analysed modifier values and resolves the requested centre (mean, median, a number or none). */
export function summariseModifier(frame: AnalysisFrame, spec: AnalysisSpec): ModifierSummary {
  if (frame.modifier.kind !== 'continuous') return { centre: 0, mean: null, sd: null, observed: null, median: null, sorted: null };
  const values = frame.modifier.values;
  let sum = 0;
  for (let i = 0; i < values.length; i++) sum += values[i];
  const mean = sum / values.length;
  let squares = 0;
  for (let i = 0; i < values.length; i++) squares += (values[i] - mean) ** 2;
  const sd = Math.sqrt(squares / (values.length - 1));
  const sorted = Float64Array.from(values).sort();
  const median = quantileType7(sorted, 0.5);
  const requested = spec.modifier.centre ?? 'none';
  const centre = requested === 'none' ? 0 : requested === 'mean' ? mean : requested === 'median' ? median : requested;
  return { centre, mean, sd, observed: [sorted[0], sorted[sorted.length - 1]], median, sorted };
}
