/**
 * The analysis form's subgroup screen: the candidate modifiers as the analyst lists them
 * (column and, for a categorical one, its reference level), their messages, and the screen
 * specification built from the form's single-modifier specification. Free of React.
 */
import type { ScreenSpec, Spec } from '@/engine/boundary/schemas';
import { SCREEN_MAX_MODIFIERS } from '@/engine/analysis/validateSpec';
import { defaultReference, entryKind, type FormColumn } from './formColumns';
import type { FieldErrors } from './specValidation';

/** One candidate modifier of the screen, as the form holds it. */
export interface ScreenRowDraft {
  column: string;
  reference: string;
}

export { SCREEN_MAX_MODIFIERS };

/** The type a column takes as a modifier, or null for an unknown column. */
export function screenRowType(columns: readonly FormColumn[], column: string): 'categorical' | 'continuous' | null {
  const found = columns.find((entry) => entry.name === column);
  return found ? entryKind(found.type) : null;
}

/** A row after its column changed: a categorical modifier gets its default reference level. */
export function reviseScreenRow(columns: readonly FormColumn[], column: string): ScreenRowDraft {
  const found = columns.find((entry) => entry.name === column);
  if (!found || entryKind(found.type) !== 'categorical') return { column, reference: '' };
  return { column, reference: defaultReference(found.levels) };
}

/** Messages by field ("modifiers.1.column", "modifiers.1.reference", "modifiers"). */
export function screenErrors(columns: readonly FormColumn[], rows: readonly ScreenRowDraft[], roles: { outcome: string; exposure: string; covariates: readonly string[] }): FieldErrors {
  const errors: FieldErrors = {};
  if (rows.length < 2 || rows.length > SCREEN_MAX_MODIFIERS) errors.modifiers = `A subgroup screen needs between 2 and ${SCREEN_MAX_MODIFIERS} modifiers.`;
  const covariates = new Set(roles.covariates);
  const seen = new Set<string>();
  rows.forEach((row, index) => {
    const at = `modifiers.${index}`;
    const type = screenRowType(columns, row.column);
    if (!row.column) errors[`${at}.column`] = 'Choose a column.';
    else if (type === null) errors[`${at}.column`] = `There is no column “${row.column}”.`;
    else if (seen.has(row.column)) errors[`${at}.column`] = `“${row.column}” is already listed.`;
    else if (row.column === roles.exposure) errors[`${at}.column`] = 'The intervention cannot also be a modifier.';
    else if (row.column === roles.outcome) errors[`${at}.column`] = 'The outcome cannot also be a modifier.';
    else if (covariates.has(row.column)) errors[`${at}.column`] = `“${row.column}” is a covariate; remove it from the covariates or from the screen.`;
    else if (type === 'categorical' && !row.reference) errors[`${at}.reference`] = 'Choose the reference level.';
    seen.add(row.column);
  });
  return errors;
}

/** The screen specification: the form's specification with the listed modifiers in place of its one modifier. */
export function toScreenSpec(columns: readonly FormColumn[], spec: Spec, rows: readonly ScreenRowDraft[]): ScreenSpec {
  const { modifier: _one, standardize: _standardize, planning: _planning, ...rest } = spec;
  return {
    ...rest,
    modifiers: rows.map((row) => {
      const type = screenRowType(columns, row.column) ?? 'categorical';
      return type === 'categorical' ? { column: row.column, type, reference: row.reference } : { column: row.column, type };
    }),
  };
}
