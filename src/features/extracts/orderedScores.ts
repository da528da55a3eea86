/**
 * An ordered categorical column in a version's dictionary: the analyst gives a score for
 * every level at confirmation (as declared missing-value codes are given), and analyses
 * with the column as modifier carry those scores into their specification for the test
 * for trend (shared/design/methods.md, "Rates, doses, absolute effects": trend).
 */
import { levelsLeftIn } from './engineData';
import type { ColumnProfile, DictionaryEntry } from './extracts.schema';

/**
 * The checked scores of one column, or undefined when none were declared. Problems (a
 * column that is not categorical, a level without a score, a score for a level the column
 * does not have, all scores equal) are added to `problems` under `path`.
 */
export function declaredOrder(
  profile: ColumnProfile,
  entry: DictionaryEntry,
  missingValues: readonly string[],
  path: string,
  problems: { path: string; message: string }[],
): DictionaryEntry['ordered'] {
  const scores = entry.ordered?.scores;
  if (scores === undefined || Object.keys(scores).length === 0) return undefined;
  if (entry.type !== 'categorical') {
    problems.push({ path, message: `Only a categorical column can be ordered; “${profile.name}” is recorded as ${entry.type}.` });
    return undefined;
  }
  if (!profile.levels || profile.levelsTruncated) {
    problems.push({ path, message: `“${profile.name}” has too many levels to order; band it into a few groups first.` });
    return undefined;
  }
  const levels = levelsLeftIn(profile.levels.map((level) => level.value), missingValues);
  const unscored = levels.filter((level) => !Object.prototype.hasOwnProperty.call(scores, level));
  if (unscored.length > 0) {
    problems.push({ path, message: `Give a score to every level of “${profile.name}”: ${unscored.map((level) => `“${level}”`).join(', ')} has none.` });
    return undefined;
  }
  const unknown = Object.keys(scores).filter((level) => !levels.includes(level));
  if (unknown.length > 0) {
    problems.push({ path, message: `“${profile.name}” has no level ${unknown.map((level) => `“${level}”`).join(', ')} (declared missing codes take no score).` });
    return undefined;
  }
  const values = levels.map((level) => scores[level]);
  if (values.every((value) => value === values[0])) {
    problems.push({ path, message: `The scores of “${profile.name}” are all equal; give the levels different scores in their order.` });
    return undefined;
  }
  return { scores: Object.fromEntries(levels.map((level) => [level, scores[level]])) };
}

/** Scores typed as "low = 1, mid = 2, high = 3"; null when the text is not in that form. Empty text gives {}. */
export function parseScores(text: string): Record<string, number> | null {
  const scores: Record<string, number> = {};
  for (const part of text.split(',').map((piece) => piece.trim()).filter((piece) => piece !== '')) {
    const at = part.lastIndexOf('=');
    if (at <= 0) return null;
    const level = part.slice(0, at).trim();
    const score = Number(part.slice(at + 1).trim());
    if (level === '' || part.slice(at + 1).trim() === '' || !Number.isFinite(score)) return null;
    scores[level] = score;
  }
  return scores;
}

/** Scores in words, in score order: "low 1 · mid 2 · high 3". */
export function scoresText(scores: Readonly<Record<string, number>>): string {
  return Object.entries(scores).sort((a, b) => a[1] - b[1]).map(([level, score]) => `${level} ${score}`).join(' · ');
}
