import type { NumberNeeded } from '../types.js';

function end(limit: number | null): NumberNeeded['lower'] {
  if (limit === null || !Number.isFinite(limit)) return { value: null, direction: null };
  if (limit === 0) return { value: null, direction: null };
  return { value: 1 / Math.abs(limit), direction: limit < 0 ? 'treat' : 'harm' };
}

/**
 * Number needed to treat from a risk difference RD = risk(intervention) − risk(reference)
 * and its interval (Altman, BMJ 1998;317:1309-1312; methods.md): NNT = 1/|RD|, named "to
 * treat" when the intervention gives fewer events (RD < 0: one event fewer per NNT
 * treated) and "to harm" when it gives more. Each interval end is 1/|RD limit| with its
 * own direction; when the RD interval includes 0 the NNT interval runs from one end through
 * infinity to the other, and `throughInfinity` says so (the ends are never ordered as one
 * finite interval).
 *
 * @example numberNeeded(-0.05, -0.08, 0.01) // 20 to treat; interval 12.5 to treat … ∞ … 100 to harm
 */
export function numberNeeded(rd: number | null, lower: number | null, upper: number | null): NumberNeeded {
  const point = end(rd);
  const throughInfinity = lower !== null && upper !== null && lower <= 0 && upper >= 0;
  return { estimate: point.value, direction: point.direction, throughInfinity, lower: end(lower), upper: end(upper) };
}
