/**
 * Two runs side by side: what changed in the specification (field by field, in words) and
 * how the key estimates moved (within-stratum effects or simple slopes, RERI, the
 * multiplicative interaction, the omnibus p-value), all taken from the two results.
 */
import type { Result, Spec } from '../../engine/boundary/schemas';
import { formatInterval, formatP, measureInfo, type NumberKind } from './resultFormat';

export interface SpecChange {
  /** Dotted path of the changed field, e.g. "modifier.reference" or "covariates". */
  path: string;
  before: string;
  after: string;
}

function flatten(value: unknown, prefix: string, into: Map<string, string>): void {
  if (Array.isArray(value)) {
    // Arrays compare as wholes (covariates, percentiles): their order is part of the meaning.
    into.set(prefix, value.map((item) => (typeof item === 'object' && item !== null ? Object.values(item).join(' ') : String(item))).join(', '));
    return;
  }
  if (value !== null && typeof value === 'object') {
    for (const [key, inner] of Object.entries(value)) flatten(inner, prefix ? `${prefix}.${key}` : key, into);
    return;
  }
  if (value !== undefined) into.set(prefix, String(value));
}

/** The fields whose values differ between two specifications ("(default)" where a field is left out). */
export function specChanges(before: Spec, after: Spec): SpecChange[] {
  const a = new Map<string, string>();
  const b = new Map<string, string>();
  flatten(before, '', a);
  flatten(after, '', b);
  const paths = [...new Set([...a.keys(), ...b.keys()])].sort();
  return paths
    .filter((path) => a.get(path) !== b.get(path))
    .map((path) => ({ path, before: a.get(path) ?? '(default)', after: b.get(path) ?? '(default)' }));
}

export interface EstimateMove {
  /** What the row is, e.g. "Effect in 80+", "RERI, 80+", "Omnibus test p". */
  label: string;
  before: string;
  after: string;
  /** after − before of the point estimates (same scale), null when either is missing or the scales differ. */
  change: number | null;
}

interface Keyed {
  label: string;
  estimate: number | null;
  text: string;
}

function keyEstimates(result: Result): Keyed[] {
  const measure = measureInfo(result);
  const kind: NumberKind = measure.kind;
  const rows: Keyed[] = [];
  for (const stratum of result.strata) {
    rows.push({ label: `${measure.code} in ${result.modifier.column} = ${stratum.level}`, estimate: stratum.effect.estimate, text: formatInterval(stratum.effect.estimate, stratum.effect.lower, stratum.effect.upper, kind) });
  }
  for (const slope of result.slopes ?? []) {
    rows.push({ label: `${measure.code} at ${slope.label}`, estimate: slope.estimate, text: formatInterval(slope.estimate, slope.lower, slope.upper, kind) });
  }
  for (const entry of result.interaction.additive) {
    if (entry.reri) rows.push({ label: `RERI, ${entry.level}`, estimate: entry.reri.estimate, text: formatInterval(entry.reri.estimate, entry.reri.lower, entry.reri.upper, 'difference') });
    const did = entry.differenceInDifferences;
    if (did) rows.push({ label: `Difference in differences, ${entry.level}`, estimate: did.estimate, text: formatInterval(did.estimate, did.lower, did.upper, kind) });
  }
  for (const entry of result.interaction.multiplicative) {
    rows.push({ label: `${measure.interactionName[0].toUpperCase()}${measure.interactionName.slice(1)}, ${entry.level}`, estimate: entry.estimate, text: formatInterval(entry.estimate, entry.lower, entry.upper, 'ratio') });
  }
  rows.push({ label: 'Omnibus test p', estimate: result.interaction.omnibus.p, text: formatP(result.interaction.omnibus.p) });
  return rows;
}

/** The key estimates of two runs, matched by label, in the order of the first (then new rows of the second). */
export function estimateMoves(before: Result, after: Result): EstimateMove[] {
  const a = keyEstimates(before);
  const b = keyEstimates(after);
  const sameScale = before.effectMeasure === after.effectMeasure;
  const labels = [...new Set([...a.map((row) => row.label), ...b.map((row) => row.label)])];
  return labels.map((label) => {
    const x = a.find((row) => row.label === label);
    const y = b.find((row) => row.label === label);
    const change = sameScale && x?.estimate != null && y?.estimate != null ? y.estimate - x.estimate : null;
    return { label, before: x?.text ?? 'not estimated', after: y?.text ?? 'not estimated', change };
  });
}
