import { describe, expect, it } from 'vitest';
import { bodyChunks } from './requestBody';

const encoder = new TextEncoder();

function streamOf(parts: string[], onCancel: () => void = () => {}): ReadableStream<Uint8Array> {
  let index = 0;
  return new ReadableStream<Uint8Array>({
    pull(controller) {
      if (index < parts.length) controller.enqueue(encoder.encode(parts[index++]));
      else controller.close();
    },
    cancel: onCancel,
  });
}

describe('bodyChunks', () => {
  it('yields every chunk of the body in order', async () => {
    const chunks: string[] = [];
    for await (const chunk of bodyChunks(streamOf(['id,arm\n', '1,0\n', '2,1\n']))) chunks.push(new TextDecoder().decode(chunk));
    expect(chunks).toEqual(['id,arm\n', '1,0\n', '2,1\n']);
  });

  it('reads a request body as sent', async () => {
    const request = new Request('http://127.0.0.1/upload', { method: 'POST', body: 'a,b\n1,2\n', headers: { 'content-type': 'text/csv' } });
    let text = '';
    if (!request.body) throw new Error('the request has a body');
    for await (const chunk of bodyChunks(request.body)) text += new TextDecoder().decode(chunk);
    expect(text).toBe('a,b\n1,2\n');
  });

  it('cancels the body when the reader stops early', async () => {
    let cancelled = false;
    for await (const chunk of bodyChunks(streamOf(['first', 'second', 'third'], () => { cancelled = true; }))) {
      expect(new TextDecoder().decode(chunk)).toBe('first');
      break;
    }
    expect(cancelled).toBe(true);
  });
});
