/**
 * Worker thread of the engine command's two-thread reading (twoThreadEngineInput.ts):
 * waits for one part request, reads that part of the file (csvPart.ts) and posts the
 * columns back, handing their buffers over without copying.
 */
import { parentPort } from 'node:worker_threads';
import { readCsvPart, transferables, type CsvPartRequest } from './csvPart';

const port = parentPort!;
port.once('message', (request: CsvPartRequest) => {
  const result = readCsvPart(request);
  port.postMessage(result, result.ok ? transferables(result) : []);
  port.close();
});
