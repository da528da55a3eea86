/**
 * The plot data of a finished run as the body of GET /api/runs/{id}/plot-data: the JSON of
 * plotInput(result), serialised once per cached result, with an entity tag that is the
 * digest of those bytes (so a new release that changes the plot data changes the tag).
 */
import { createHash } from 'node:crypto';
import type { Result } from '@/engine/boundary/schemas';
import { perResult } from './finishedResults';
import { plotInput } from './plots/plotInput';

export interface PlotData {
  body: string;
  etag: string;
}

export const plotDataOf = perResult((result: Result): PlotData => {
  const body = JSON.stringify(plotInput(result));
  return { body, etag: `"${createHash('sha256').update(body).digest('base64url').slice(0, 32)}"` };
}, () => '');

/** True when an If-None-Match header names this tag (or any, `*`). */
export function matchesTag(ifNoneMatch: string | null, etag: string): boolean {
  if (!ifNoneMatch) return false;
  return ifNoneMatch.split(',').some((tag) => {
    const trimmed = tag.trim();
    return trimmed === '*' || trimmed === etag || trimmed === `W/${etag}`;
  });
}
