/**
 * The model as an equation in structured parts (link, left side, numbered terms, notes),
 * with reference (treatment) coding as the engine uses it, and the equation as one line
 * of text.
 */
import type { Spec } from '@/engine/boundary/schemas';
import { defaultReference, levelsFromReference, type FormColumn } from './formColumns';

/** A factor of one equation term: a variable, or an indicator of one of its levels. */
export type EquationFactor =
  | { kind: 'variable'; column: string; centre?: 'mean' | 'median' | number }
  | { kind: 'indicator'; column: string; level: string }
  /** One indicator per level other than the reference, when a column has many (coefficients numbered as a range). */
  | { kind: 'indicators'; column: string; reference: string; count: number };

export interface EquationTerm {
  role: 'intercept' | 'intervention' | 'modifier' | 'product' | 'covariate';
  /** Subscript of β; a range [first, last] for a collapsed set of indicators. */
  coefficient: number | [number, number];
  factors: EquationFactor[];
}

export interface ModelEquation {
  /** Link applied to the left side. */
  link: 'logit' | 'log' | 'identity';
  /** P(outcome = event) for binary outcomes; E(outcome) for continuous ones. */
  left: { kind: 'probability'; column: string; event: string } | { kind: 'mean'; column: string };
  terms: EquationTerm[];
  /** What a reader needs beside the formula (reference levels, centring, collapsed levels). */
  notes: string[];
  /** A rate model's person-time column: log(person-time) is added to the right side (the offset). */
  offset?: string | null;
}

/** Categorical columns with more non-reference levels than this are written as one indicator set. */
const MAX_LISTED_LEVELS = 4;

function factorTerms(
  column: string,
  reference: string,
  levels: readonly string[] | null,
): { factors: EquationFactor[]; count: number; collapsed: boolean } {
  const others = levels ? levelsFromReference(levels, reference).slice(1) : [];
  if (others.length === 0 || others.length > MAX_LISTED_LEVELS) {
    return { factors: [{ kind: 'indicators', column, reference, count: Math.max(others.length, 1) }], count: Math.max(others.length, 1), collapsed: true };
  }
  return { factors: others.map((level) => ({ kind: 'indicator', column, level })), count: others.length, collapsed: false };
}

/** Whether a 0/1 column with reference 0 can be written as the plain variable. */
function isZeroOne(levels: readonly string[] | null, reference: string): boolean {
  return reference === '0' && levels !== null && levels.length === 2 && levels.includes('0') && levels.includes('1');
}

/**
 * The model as an equation: link(left side) = β0 + β1·intervention + modifier terms +
 * product terms + covariate terms, with reference (treatment) coding as the engine uses it.
 */
export function modelEquation(spec: Spec, columns: readonly FormColumn[]): ModelEquation {
  const byName = new Map(columns.map((column) => [column.name, column]));
  const link = spec.model === 'logistic' ? 'logit' : spec.model === 'linear' ? 'identity' : 'log';
  const outcomeColumn = byName.get(spec.outcome.column);
  const event = spec.outcome.event ?? (outcomeColumn?.levels?.includes('1') || !outcomeColumn?.levels ? '1' : (outcomeColumn.levels[1] ?? '1'));
  const left: ModelEquation['left'] =
    spec.outcome.type === 'binary' ? { kind: 'probability', column: spec.outcome.column, event } : { kind: 'mean', column: spec.outcome.column };
  const notes: string[] = [];
  const terms: EquationTerm[] = [{ role: 'intercept', coefficient: 0, factors: [] }];
  let next = 1;

  const exposureLevels = byName.get(spec.exposure.column)?.levels ?? null;
  const exposureReference = spec.exposure.reference ?? '';
  const exposureOther = exposureLevels?.find((level) => level !== exposureReference) ?? '1';
  const dose = spec.exposure.type === 'continuous';
  const exposureFactor: EquationFactor = dose || isZeroOne(exposureLevels, exposureReference)
    ? { kind: 'variable', column: spec.exposure.column }
    : { kind: 'indicator', column: spec.exposure.column, level: exposureOther };
  terms.push({ role: 'intervention', coefficient: next++, factors: [exposureFactor] });
  notes.push(
    dose
      ? `${spec.exposure.column} is a continuous dose: β1 is its slope per unit in the modifier's reference level, and each product term changes that slope.`
      : `${spec.exposure.column}: reference level ${exposureReference}.`,
  );

  let modifierFactors: EquationFactor[];
  if (spec.modifier.type === 'categorical') {
    const levels = byName.get(spec.modifier.column)?.levels ?? null;
    const reference = spec.modifier.reference ?? defaultReference(levels);
    if (isZeroOne(levels, reference)) modifierFactors = [{ kind: 'variable', column: spec.modifier.column }];
    else modifierFactors = factorTerms(spec.modifier.column, reference, levels).factors;
    notes.push(`${spec.modifier.column}: reference level ${reference}.`);
    const ordered = spec.modifier.ordered?.scores;
    if (ordered) {
      const scores = Object.entries(ordered).sort((a, b) => a[1] - b[1]).map(([level, score]) => `${level} ${score}`).join(' · ');
      notes.push(`Test for trend: a second fit replaces the product terms with one term ${spec.exposure.column}×score(${spec.modifier.column}), scores ${scores}.`);
    }
  } else {
    const centre = spec.modifier.centre ?? 'none';
    modifierFactors = [{ kind: 'variable', column: spec.modifier.column, ...(centre === 'none' ? {} : { centre }) }];
    if (centre !== 'none') notes.push(`${spec.modifier.column} is centred on ${typeof centre === 'number' ? centre : `its ${centre}`} before forming the product.`);
  }
  for (const factor of modifierFactors) {
    const count = factor.kind === 'indicators' ? factor.count : 1;
    terms.push({ role: 'modifier', coefficient: count > 1 ? [next, next + count - 1] : next, factors: [factor] });
    next += count;
  }
  for (const factor of modifierFactors) {
    const count = factor.kind === 'indicators' ? factor.count : 1;
    terms.push({ role: 'product', coefficient: count > 1 ? [next, next + count - 1] : next, factors: [exposureFactor, factor] });
    next += count;
  }

  for (const covariate of spec.covariates) {
    if (covariate.type === 'continuous') {
      terms.push({ role: 'covariate', coefficient: next++, factors: [{ kind: 'variable', column: covariate.column }] });
      continue;
    }
    const levels = byName.get(covariate.column)?.levels ?? null;
    const reference = covariate.reference ?? defaultReference(levels);
    if (isZeroOne(levels, reference)) {
      terms.push({ role: 'covariate', coefficient: next++, factors: [{ kind: 'variable', column: covariate.column }] });
      continue;
    }
    const { factors, count, collapsed } = factorTerms(covariate.column, reference, levels);
    if (collapsed) {
      terms.push({ role: 'covariate', coefficient: count > 1 ? [next, next + count - 1] : next, factors });
      next += count;
      notes.push(`${covariate.column}: one term for each level other than ${reference}.`);
    } else {
      for (const factor of factors) terms.push({ role: 'covariate', coefficient: next++, factors: [factor] });
      notes.push(`${covariate.column}: reference level ${reference}.`);
    }
  }
  if (spec.standardize === true && spec.outcome.type === 'binary') {
    notes.push(
      `Absolute effects: within each level m of ${spec.modifier.column}, r_a(m) = the mean over its rows of the predicted P(${spec.outcome.column} = ${event}) with ${spec.exposure.column} set to a (reference and other level); RD(m) = r_1(m) − r_0(m), NNT = 1/|RD(m)|, and RD(m) − RD(reference level).`,
    );
  }
  const personTime = spec.outcome.personTime ?? null;
  if (personTime) notes.push(`log(${personTime}) is an offset (its coefficient fixed at 1), so exp(β) are rate ratios per unit of ${personTime}.`);
  if (spec.weights) notes.push(`Each row counts as ${spec.weights.column} identical rows (frequency weights).`);
  if (spec.cluster) notes.push(`Standard errors are cluster-robust (CR1, Liang and Zeger 1986), with clusters given by ${spec.cluster.column}.`);
  else if (spec.standardErrors === 'robust') notes.push('Standard errors are robust (HC0 sandwich).');
  return { link, left, terms, notes, offset: personTime };
}

function factorText(factor: EquationFactor): string {
  if (factor.kind === 'variable') {
    if (factor.centre === undefined) return factor.column;
    return `(${factor.column} − ${typeof factor.centre === 'number' ? factor.centre : factor.centre})`;
  }
  if (factor.kind === 'indicator') return `[${factor.column} = ${factor.level}]`;
  return `[${factor.column} = each level ≠ ${factor.reference}]`;
}

function coefficientText(coefficient: EquationTerm['coefficient']): string {
  return typeof coefficient === 'number' ? `β${coefficient}` : `β${coefficient[0]}–${coefficient[1]}`;
}

/** The equation as one line of text (for screen readers, copying and tests). */
export function equationText(equation: ModelEquation): string {
  const inner = equation.left.kind === 'probability' ? `P(${equation.left.column} = ${equation.left.event})` : `E(${equation.left.column})`;
  const left = equation.link === 'identity' ? inner : `${equation.link}(${inner})`;
  const offset = equation.offset ? `log(${equation.offset}) + ` : '';
  const right = offset + equation.terms
    .map((term) => (term.factors.length === 0 ? coefficientText(term.coefficient) : `${coefficientText(term.coefficient)}·${term.factors.map(factorText).join('×')}`))
    .join(' + ');
  return `${left} = ${right}`;
}
