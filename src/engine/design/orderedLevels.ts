/** The parts of a coded factor that ordering touches (analysisFrame.ts's CodedFactor has them). */
interface LevelCoding {
  readonly levels: readonly string[];
  readonly codes: Int32Array;
  readonly counts: Int32Array;
}

/** An ordered modifier's levels after the reference, in the order of their scores (unscored levels last; the trend test refuses them). */
export function orderByScore<T extends LevelCoding>(factor: T, scores: Readonly<Record<string, number>>): T {
  const score = (level: string) => (Object.prototype.hasOwnProperty.call(scores, level) ? scores[level] : Infinity);
  const rest = factor.levels.slice(1).map((level, k) => ({ level, k: k + 1 })).sort((x, y) => score(x.level) - score(y.level) || x.k - y.k);
  if (rest.every((entry, k) => entry.k === k + 1)) return factor;
  const newCode = new Int32Array(factor.levels.length);
  rest.forEach((entry, k) => (newCode[entry.k] = k + 1));
  const codes = Int32Array.from(factor.codes, (code) => newCode[code]);
  const counts = new Int32Array(factor.levels.length);
  counts[0] = factor.counts[0];
  rest.forEach((entry, k) => (counts[k + 1] = factor.counts[entry.k]));
  return { ...factor, levels: [factor.levels[0], ...rest.map((entry) => entry.level)], codes, counts };
}
