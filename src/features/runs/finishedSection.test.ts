/**
 * FinishedSection.astro and finishedHtml.ts: a section's HTML is rendered once per key and
 * then served as it was rendered; another key (another run, another section) renders its
 * own; no key renders live; the oldest of more than 64 keys is dropped and rendered again.
 * (Run-level behaviour through the real results page: tests/api/resultsPageCache.test.ts.)
 */
import { experimental_AstroContainer as AstroContainer } from 'astro/container';
import { beforeAll, beforeEach, describe, expect, it } from 'vitest';
import FinishedSection from './FinishedSection.astro';
import { cachedHtml, finishedSectionKey, forgetFinishedHtml, keepHtml } from './finishedHtml';

const runA = '7d1d2b0e-5a53-4a55-9f4c-0c6f3f7c1a01';
const runB = '7d1d2b0e-5a53-4a55-9f4c-0c6f3f7c1a02';

describe('FinishedSection.astro', () => {
  let container: AstroContainer;
  const render = (cacheKey: string | null, content: string) =>
    container.renderToString(FinishedSection, { props: { cacheKey }, slots: { default: content } });

  beforeAll(async () => {
    container = await AstroContainer.create();
  });
  beforeEach(() => forgetFinishedHtml());

  it('renders its content the first time, and serves that HTML again for the same key', async () => {
    const key = finishedSectionKey(runA, 'result-tables');
    expect(await render(key, '<table data-run="a"><tr><td>1.82 (1.21 to 2.74)</td></tr></table>')).toBe('<table data-run="a"><tr><td>1.82 (1.21 to 2.74)</td></tr></table>');
    expect(cachedHtml(key)).toBe('<table data-run="a"><tr><td>1.82 (1.21 to 2.74)</td></tr></table>');
    // Same key, other content: the kept HTML comes back (the content is not rendered again).
    expect(await render(key, '<p>rendered again</p>')).toBe('<table data-run="a"><tr><td>1.82 (1.21 to 2.74)</td></tr></table>');
  });

  it('keeps runs and sections apart', async () => {
    await render(finishedSectionKey(runA, 'result-tables'), '<p>run A tables</p>');
    expect(await render(finishedSectionKey(runB, 'result-tables'), '<p>run B tables</p>')).toBe('<p>run B tables</p>');
    expect(await render(finishedSectionKey(runA, 'other-section'), '<p>run A other</p>')).toBe('<p>run A other</p>');
    expect(await render(finishedSectionKey(runA, 'result-tables'), '<p>changed</p>')).toBe('<p>run A tables</p>');
  });

  it('renders live, and keeps nothing, without a key', async () => {
    expect(await render(null, '<p>one</p>')).toBe('<p>one</p>');
    expect(await render(null, '<p>two</p>')).toBe('<p>two</p>');
  });

  it('drops the least recently used of more than 64 sections', () => {
    const keys = Array.from({ length: 65 }, (_, i) => finishedSectionKey(`run-${i}`, 'result-tables'));
    keepHtml(keys[0], '<p>0</p>');
    keepHtml(keys[1], '<p>1</p>');
    expect(cachedHtml(keys[0])).toBe('<p>0</p>'); // now the most recently used
    for (const [i, key] of keys.entries()) if (i > 1) keepHtml(key, `<p>${i}</p>`);
    expect(cachedHtml(keys[0])).toBe('<p>0</p>');
    expect(cachedHtml(keys[1])).toBeUndefined();
    keepHtml(finishedSectionKey('run-65', 'result-tables'), '<p>65</p>');
    expect(cachedHtml(keys[2])).toBeUndefined();
    expect(cachedHtml(keys[0])).toBe('<p>0</p>');
  });
});
