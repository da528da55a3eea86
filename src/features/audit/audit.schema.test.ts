/** Reading checkpoint files: one JSON document, or JSON Lines whose last line is newest. */
import { describe, expect, it } from 'vitest';
import { parseCheckpointText } from './audit.schema';

const checkpoint = (position: number) => ({
  format: 'crossgrain-audit-checkpoint/1', position, hash: String(position % 10).repeat(64),
  eventAt: '2026-12-01T09:00:00.000Z', takenAt: '2026-12-01T09:00:01.000Z',
});

describe('parseCheckpointText', () => {
  it('reads one pretty-printed checkpoint', () => {
    expect(parseCheckpointText(JSON.stringify(checkpoint(12), null, 2))).toEqual({ checkpoint: checkpoint(12) });
  });

  it('takes the last line of a JSON Lines file', () => {
    const text = `${JSON.stringify(checkpoint(3))}\n${JSON.stringify(checkpoint(7))}\n\n`;
    expect(parseCheckpointText(text)).toEqual({ checkpoint: checkpoint(7) });
  });

  it('says when the text is not JSON, and which fields are wrong', () => {
    expect(parseCheckpointText('position,hash\n3,abc')).toEqual({ problem: expect.stringMatching(/^it is not JSON/) });
    const wrong = parseCheckpointText(JSON.stringify({ ...checkpoint(1), position: 0, hash: 'ABC' }));
    expect('problem' in wrong && wrong.problem).toMatch(/position: .*; hash: The hash must be 64 lower-case hexadecimal digits/);
  });
});
