/**
 * A request body as a stream of byte chunks, read with the body's own reader. Stopping
 * early (a refused upload) cancels the body, so the rest is not read.
 */
export async function* bodyChunks(body: ReadableStream<Uint8Array>): AsyncGenerator<Uint8Array> {
  const reader = body.getReader();
  let finished = false;
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) {
        finished = true;
        return;
      }
      yield value;
    }
  } finally {
    if (finished) reader.releaseLock();
    else await reader.cancel().catch(() => {});
  }
}
