/**
 * A continuous modifier in words: over which stretch of the modifier the intervention's
 * effect is distinguishable from no effect (the Johnson-Neyman boundaries, Bauer and
 * Curran 2005, each spoken of on its own), and where the data are thin (outside the 5th
 * to 95th percentiles, or in a tenth of the range holding few rows). Used by the results
 * page, its effect curve and the brief.
 */
import type { Result } from '@/engine/boundary/schemas';
import { percentText } from '../analyses/specWords';
import { fixed, modifierDecimals } from './resultFormat';

/** A tenth of the observed range holding fewer than this share of the rows counts as thin (Crossgrain's choice). */
export const SPARSE_BIN_SHARE = 0.02;

export interface EffectRangeWords {
  /** One plain sentence: where the effect is distinguishable from none, and where the data are thin. */
  sentence: string;
  /** A few words about each Johnson-Neyman boundary, in order (none when there is no boundary). */
  boundaries: { at: number; inRange: boolean; text: string }[];
  /** Stretches of the observed range where the data are thin, in order. */
  thin: [number, number][];
}

type Spread = NonNullable<Result['spread']>;

/** Where the data are thin: the outer 5 % at each end, and sparse tenths of the range between them. */
export function thinStretches(spread: Spread | null | undefined, observed: readonly [number, number]): [number, number][] {
  if (!spread) return [];
  const [min, max] = observed;
  const total = spread.bins.reduce((sum, bin) => sum + bin.n, 0);
  const stretches: [number, number][] = [];
  if (spread.p5 > min) stretches.push([min, spread.p5]);
  for (const bin of spread.bins) {
    if (bin.n >= SPARSE_BIN_SHARE * total || bin.to <= spread.p5 || bin.from >= spread.p95) continue;
    const from = Math.max(bin.from, spread.p5);
    const to = Math.min(bin.to, spread.p95);
    const last = stretches[stretches.length - 1];
    if (last && last[1] >= from) last[1] = Math.max(last[1], to);
    else stretches.push([from, to]);
  }
  if (spread.p95 < max) {
    const last = stretches[stretches.length - 1];
    if (last && last[1] >= spread.p95) last[1] = max;
    else stretches.push([spread.p95, max]);
  }
  return stretches;
}

/** Whether a modifier value lies where the data are thin (the observed ends count; the inner edges of a stretch do not). */
export function isThin(at: number, thin: readonly [number, number][], [min, max]: readonly [number, number]): boolean {
  return thin.some(([from, to]) => (at > from || from === min) && (at < to || to === max) && at >= from && at <= to);
}

/** Stretches of [min, max] in words: "below 2.0", "between 4.0 and 5.5", "above 8.0". */
function stretchWords(stretches: readonly [number, number][], [min, max]: readonly [number, number], show: (value: number) => string): string[] {
  return stretches.map(([from, to]) => (from <= min ? `below ${show(to)}` : to >= max ? `above ${show(from)}` : `between ${show(from)} and ${show(to)}`));
}

function joinOr(pieces: readonly string[], word: 'or' | 'and'): string {
  return pieces.length <= 1 ? (pieces[0] ?? '') : `${pieces.slice(0, -1).join(', ')} ${word} ${pieces[pieces.length - 1]}`;
}

/**
 * The effect's range in words. The stretch where it is distinguishable from none follows
 * from the engine's `significant` (outside or inside the boundaries, everywhere or
 * nowhere; with one boundary, above it for "outside" and below it for "inside"), cut to
 * the observed range.
 */
export function effectRangeInWords(
  jn: NonNullable<Result['johnsonNeyman']>,
  options: { modifier: string; alpha: number; spread?: Spread | null; subject?: string },
): EffectRangeWords {
  const subject = options.subject ?? "The intervention's effect";
  const show = (value: number) => fixed(value, modifierDecimals(jn.observed));
  const [min, max] = jn.observed;
  const level = `at the ${percentText(options.alpha)} % level`;
  const bounds: readonly number[] = jn.bounds ?? [];

  let regions: [number, number][];
  if (jn.significant === 'everywhere') regions = [[-Infinity, Infinity]];
  else if (jn.significant === 'nowhere' || bounds.length === 0) regions = [];
  else if (bounds.length === 1) regions = jn.significant === 'outside' ? [[bounds[0], Infinity]] : [[-Infinity, bounds[0]]];
  else if (jn.significant === 'outside') regions = [[-Infinity, bounds[0]], [bounds[1], Infinity]];
  else regions = [[bounds[0], bounds[1]]];
  const clear = regions.map(([from, to]) => [Math.max(from, min), Math.min(to, max)] as [number, number]).filter(([from, to]) => to > from);
  const unclear: [number, number][] = [];
  let cursor = min;
  for (const [from, to] of clear) {
    if (from > cursor) unclear.push([cursor, from]);
    cursor = to;
  }
  if (cursor < max) unclear.push([cursor, max]);

  let where: string;
  if (clear.length === 0) where = `${subject} cannot be told apart from no effect ${level} anywhere in the observed range of ${options.modifier} (${show(min)} to ${show(max)})`;
  else if (unclear.length === 0) where = `${subject} is distinguishable from no effect ${level} across the whole observed range of ${options.modifier} (${show(min)} to ${show(max)})`;
  else {
    where =
      `${subject} is distinguishable from no effect ${level} where ${options.modifier} is ${joinOr(stretchWords(clear, jn.observed, show), 'or')}, ` +
      `and cannot be told apart from none ${joinOr(stretchWords(unclear, jn.observed, show), 'or')} (observed ${show(min)} to ${show(max)})`;
  }
  const thin = thinStretches(options.spread, jn.observed);
  const thinWords = thin.length > 0 ? `; the data are thin ${joinOr(stretchWords(thin, jn.observed, show), 'and')}, so read the effect there with care` : '';

  const named = bounds.length === 2 ? ['The lower Johnson-Neyman boundary', 'The upper Johnson-Neyman boundary'] : ['The Johnson-Neyman boundary'];
  const boundaries = bounds.map((at, index) => {
    const name = `${named[index]}, ${show(at)},`;
    if (at < min) return { at, inRange: false, text: `${name} lies below the smallest observed ${options.modifier} (${show(min)}): no one in these data is there, so it marks nothing about them.` };
    if (at > max) return { at, inRange: false, text: `${name} lies above the largest observed ${options.modifier} (${show(max)}): no one in these data is there, so it marks nothing about them.` };
    const thinThere = isThin(at, thin, jn.observed) ? ', in a stretch where the data are thin' : '';
    return { at, inRange: true, text: `${name} lies within the observed range${thinThere}: there the interval of the effect just reaches no effect.` };
  });
  return { sentence: `${where}${thinWords}.`, boundaries, thin };
}
