/**
 * The cautions Crossgrain shows. One source of truth: pages, results, briefs, exports and
 * the audit trail (which records the exact text shown beside a result) all read it here.
 * Changing the wording is a versioned change: bump CAUTION_VERSION.
 */
export const CAUTION_VERSION = '2026-12-01';

/** One line, in the footer of every page. */
export const STANDING_CAUTION =
  'Exploratory analyses of observational and quality-improvement data. Not clinical guidance: ' +
  'decisions defer to local clinical governance and licensed clinical judgement.';

/** The full caution block shown at the top of every result and brief. */
export const RESULT_CAUTIONS: readonly string[] = [
  'These are exploratory analyses of observational or quality-improvement data, not clinical guidance.',
  'Subgroup differences can arise by chance, and the more subgroups are examined the more likely a false alarm becomes.',
  'Absence of evidence of interaction is not evidence of its absence.',
  'The modifier may itself be confounded or stand in for something else; a causal reading needs its confounders controlled.',
  'Decisions defer to local clinical governance and licensed clinical judgement.',
];

/** The caution as a single text, for exports and the audit trail. */
export function cautionText(): string {
  return RESULT_CAUTIONS.join(' ');
}
