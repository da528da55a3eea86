import { modifierSpec as screenModifierSpec } from '@/engine/analysis/subgroupScreen';
import { SpecSchema, type AnySpec, type ScreenSpec, type Spec } from '@/engine/boundary/schemas';

/** True when the specification is a subgroup screen ("modifiers" in place of "modifier"). */
export function isScreenSpec(spec: AnySpec): spec is ScreenSpec {
  return Array.isArray(spec.modifiers);
}

/** The single-modifier specification of one screen modifier: everything else as in the screen (the engine's own). */
export { screenModifierSpec };

/** The single-modifier specifications a specification stands for: itself, or one per screen modifier. */
export function singleSpecs(spec: AnySpec): Spec[] {
  if (isScreenSpec(spec)) return spec.modifiers.map((_, index) => screenModifierSpec(spec, index));
  return [spec as Spec];
}

/** The modifier columns a specification examines, in order. */
export function modifierColumns(spec: AnySpec): string[] {
  return isScreenSpec(spec) ? spec.modifiers.map((modifier) => modifier.column) : spec.modifier ? [spec.modifier.column] : [];
}

/**
 * The query string that opens the analysis form with a screen's outcome, intervention,
 * covariates and model and one of its modifiers as a single analysis ("full analysis").
 */
export function fullAnalysisQuery(spec: ScreenSpec, index: number): string {
  return new URLSearchParams({ from: JSON.stringify(screenModifierSpec(spec, index)) }).toString();
}

/**
 * Parses a single-modifier specification.
 *
 * @throws Error when the value is not a specification or is a subgroup screen.
 */
export function parseSingleSpec(value: unknown): Spec {
  const spec = SpecSchema.parse(value);
  if (isScreenSpec(spec) || spec.modifier === undefined) throw new Error('Expected a specification with one modifier, not a subgroup screen.');
  return { ...spec, modifier: spec.modifier };
}

/** The specification a "?from=" query parameter carries, or undefined when absent or not a valid single-modifier specification. */
export function prefillFromQuery(value: string | null): Spec | undefined {
  if (!value) return undefined;
  try {
    return parseSingleSpec(JSON.parse(value));
  } catch {
    return undefined;
  }
}
