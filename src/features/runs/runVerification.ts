/**
 * Whether a re-run reproduced a past run. The product's promise (brief, audit step): same
 * extract hash, same specification, same engine version and same seed give the same
 * result bit for bit. Each of the four inputs is compared, and the results by the SHA-256
 * of their canonical JSON; where the digests differ, the differing fields are listed
 * (path, then both values), so an auditor can see what moved and by how much.
 */
import { canonicalJson, resultDigest } from './canonical';

export interface RunFacts {
  extractSha256: string;
  specHash: string;
  engineVersion: string | null;
  seed: number | null;
  result: unknown;
}

export interface Difference {
  path: string;
  original: string;
  rerun: string;
}

export interface Verification {
  reproduced: boolean;
  checks: { name: 'extract' | 'specification' | 'engine' | 'seed' | 'result'; original: string; rerun: string; same: boolean }[];
  /** The first differing result fields (at most DIFFERENCE_LIMIT), and how many differ in all. */
  differences: Difference[];
  differenceCount: number;
}

export const DIFFERENCE_LIMIT = 20;

const shown = (value: unknown): string => (value === undefined ? '(absent)' : canonicalJson(value));

/** Walks two JSON values in step and collects the leaf paths whose values differ. */
export function resultDifferences(original: unknown, rerun: unknown, limit = DIFFERENCE_LIMIT): { differences: Difference[]; count: number } {
  const differences: Difference[] = [];
  let count = 0;
  const walk = (a: unknown, b: unknown, path: string) => {
    const bothArrays = Array.isArray(a) && Array.isArray(b);
    const bothObjects = !bothArrays && a !== null && b !== null && typeof a === 'object' && typeof b === 'object' && !Array.isArray(a) && !Array.isArray(b);
    if (bothArrays) {
      const length = Math.max(a.length, b.length);
      for (let i = 0; i < length; i += 1) walk(a[i], b[i], `${path}[${i}]`);
      return;
    }
    if (bothObjects) {
      const keys = [...new Set([...Object.keys(a as object), ...Object.keys(b as object)])].sort();
      for (const key of keys) walk((a as Record<string, unknown>)[key], (b as Record<string, unknown>)[key], path ? `${path}.${key}` : key);
      return;
    }
    if (canonicalJson(a) === canonicalJson(b)) return;
    count += 1;
    if (differences.length < limit) differences.push({ path: path || '(whole result)', original: shown(a), rerun: shown(b) });
  };
  walk(original, rerun, '');
  return { differences, count };
}

export function compareRuns(original: RunFacts, rerun: RunFacts): Verification {
  const text = (value: string | number | null) => (value === null ? '—' : String(value));
  const originalDigest = resultDigest(original.result);
  const rerunDigest = resultDigest(rerun.result);
  const checks: Verification['checks'] = [
    { name: 'extract', original: original.extractSha256, rerun: rerun.extractSha256, same: original.extractSha256 === rerun.extractSha256 },
    { name: 'specification', original: original.specHash, rerun: rerun.specHash, same: original.specHash === rerun.specHash },
    { name: 'engine', original: text(original.engineVersion), rerun: text(rerun.engineVersion), same: original.engineVersion === rerun.engineVersion },
    { name: 'seed', original: text(original.seed), rerun: text(rerun.seed), same: original.seed === rerun.seed },
    { name: 'result', original: originalDigest, rerun: rerunDigest, same: originalDigest === rerunDigest },
  ];
  const { differences, count } = originalDigest === rerunDigest ? { differences: [], count: 0 } : resultDifferences(original.result, rerun.result);
  return { reproduced: checks.every((check) => check.same), checks, differences, differenceCount: count };
}

/** One sentence for the page and the audit trail. */
export function verificationSentence(verification: Verification): string {
  if (verification.reproduced) {
    return 'Reproduced bit for bit: same extract, specification, engine version and seed, and an identical result.';
  }
  const inputs = verification.checks.filter((check) => check.name !== 'result' && !check.same).map((check) => check.name);
  const result = verification.checks.find((check) => check.name === 'result');
  const listed = inputs.length > 1 ? `${inputs.slice(0, -1).join(', ')} and ${inputs.at(-1)}` : inputs[0];
  const count = verification.differenceCount;
  const parts = [
    inputs.length ? `the ${listed} ${inputs.length === 1 ? 'differs' : 'differ'}` : 'the inputs are the same',
    result?.same ? 'the result is identical' : `${count.toLocaleString('en-GB')} result value${count === 1 ? ' differs' : 's differ'}`,
  ];
  return `Not reproduced: ${parts.join(', and ')}.`;
}
