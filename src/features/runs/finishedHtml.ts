/**
 * Server-rendered HTML of the sections of a results page that depend only on a finished
 * run's stored result (its tables), rendered once per run per process and reused. A
 * succeeded run's result never changes (finishedResults.ts), so neither does this HTML.
 *
 * What may go in: markup that is a function of the run's result and spec alone, never of
 * the reader (no names, rights, review state, comments or CSRF-like tokens). The page reads
 * the run under row-level security and checks the reader's right to read it before it
 * reaches a cached section, so a reader never gets a section of a run they could not open.
 * Keys name the run (a re-run is another run, so another key) and the section.
 */

/** Enough for the runs people are reading now; each entry is a few tens of kilobytes. */
const CAPACITY = 64;
const sections = new Map<string, string>();

/** The key of one section of a succeeded run. */
export function finishedSectionKey(runId: string, section: string): string {
  return `${runId}/${section}`;
}

/** The HTML of a section rendered before in this process, if any. */
export function cachedHtml(key: string): string | undefined {
  const html = sections.get(key);
  if (html !== undefined) {
    // Most recently used last, so the oldest is the one dropped.
    sections.delete(key);
    sections.set(key, html);
  }
  return html;
}

/** Keeps the HTML of a section for the next view. */
export function keepHtml(key: string, html: string): void {
  sections.delete(key);
  sections.set(key, html);
  if (sections.size > CAPACITY) sections.delete(sections.keys().next().value as string);
}

/** Empties the cache (tests). */
export function forgetFinishedHtml(): void {
  sections.clear();
}
