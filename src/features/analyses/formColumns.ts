/**
 * The columns an analysis form offers: the extract's confirmed dictionary joined with its
 * column profile, the natural order of levels, the reference level a form proposes, and
 * how a column enters a model.
 */
import { levelsLeftIn } from '../extracts/engineData';
import type { ColumnProfile, DictionaryEntry } from '../extracts/extracts.schema';

export type ColumnKind = DictionaryEntry['type'];

/** One confirmed dictionary column with what the profile knows about its values. */
export interface FormColumn {
  name: string;
  type: ColumnKind;
  description: string;
  /** Levels in the profile's order (null for columns with many distinct numbers). */
  levels: string[] | null;
  /** True when the profile listed only the most frequent levels. */
  levelsTruncated: boolean;
  /** Summary of a numeric column (null for text columns). */
  numeric: { min: number; max: number; mean: number; sd: number | null; median: number } | null;
  /** Scores of an ordered categorical column, from the dictionary (null when not ordered). */
  ordered?: Record<string, number> | null;
}

/** Joins the confirmed dictionary with the column profile (levels, numeric summary). */
export function formColumns(dictionary: readonly DictionaryEntry[], profile: readonly ColumnProfile[]): FormColumn[] {
  const byName = new Map(profile.map((column) => [column.name, column]));
  return dictionary.map((entry) => {
    const column = byName.get(entry.name);
    return {
      name: entry.name,
      type: entry.type,
      description: entry.description ?? '',
      levels: column?.levels ? levelsLeftIn(column.levels.map((level) => level.value), entry.missingValues) : null,
      levelsTruncated: column?.levelsTruncated ?? false,
      numeric: column?.numeric
        ? { min: column.numeric.min, max: column.numeric.max, mean: column.numeric.mean, sd: column.numeric.sd, median: column.numeric.median }
        : null,
      ...(entry.ordered ? { ordered: entry.ordered.scores } : {}),
    };
  });
}

const collator = new Intl.Collator('en', { numeric: true, sensitivity: 'base' });

/** Levels in natural order ("2" before "10", "18-44" before "45-64"). */
export function naturalOrder(levels: readonly string[]): string[] {
  return [...levels].sort((a, b) => collator.compare(a, b));
}

/** The reference level a form proposes: "0" where present, else the first in natural order. */
export function defaultReference(levels: readonly string[] | null): string {
  if (!levels || levels.length === 0) return '';
  if (levels.includes('0')) return '0';
  return naturalOrder(levels)[0];
}

/** Levels with the reference first and the rest in natural order. */
export function levelsFromReference(levels: readonly string[], reference: string): string[] {
  return [reference, ...naturalOrder(levels.filter((level) => level !== reference))];
}

/** How a column of a kind enters a model as a modifier or covariate. */
export function entryKind(type: ColumnKind): 'categorical' | 'continuous' {
  return type === 'binary' || type === 'categorical' ? 'categorical' : 'continuous';
}

/** Whether a binary outcome needs its event level named (text levels other than 0/1). */
export function needsEventLevel(column: FormColumn | undefined): boolean {
  if (!column?.levels) return false;
  return !(column.levels.length === 2 && column.levels.includes('0') && column.levels.includes('1'));
}
