/**
 * Canonical JSON and the hashes built on it: a specification's hash (stored with every
 * run) and a result's digest (compared when a run is re-run to verify it).
 */
import { createHash } from 'node:crypto';
import type { AnySpec } from '@/engine/boundary/schemas';

/**
 * JSON with object keys sorted at every level: equal values serialise equally whatever
 * order their keys were written in (PostgreSQL's jsonb reorders keys). Numbers use
 * JavaScript's shortest round-trip form, so equal doubles give equal text.
 */
export function canonicalJson(value: unknown): string {
  if (Array.isArray(value)) return `[${value.map(canonicalJson).join(',')}]`;
  if (value && typeof value === 'object') {
    const entries = Object.entries(value as Record<string, unknown>)
      .filter(([, v]) => v !== undefined)
      .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(',')}}`;
  }
  return JSON.stringify(value);
}

export function specHash(spec: AnySpec): string {
  return createHash('sha256').update(canonicalJson(spec)).digest('hex');
}

/** SHA-256 of a result's canonical JSON: equal digests mean the same numbers, bit for bit. */
export function resultDigest(result: unknown): string {
  return createHash('sha256').update(canonicalJson(result)).digest('hex');
}
