/**
 * The engine command's helper thread on a large file (twoThreadEngineInput.ts): it first
 * reads the second part of the file (csvPart.ts, the request in `workerData.part`) and posts
 * the columns on `workerData.partPort`, handing their buffers over without copying; then it
 * serves the fit's passes as the pass pool's first helper (engine/threads/passHelper.ts),
 * so that one thread start serves the reading and the fit.
 */
import { workerData, type MessagePort } from 'node:worker_threads';
import { runPassHelper, type PassHelperData } from '@/engine/threads/passHelper';
import { readCsvPart, transferables, type CsvPartRequest } from './csvPart';

const data = workerData as PassHelperData & { part: CsvPartRequest; partPort: MessagePort };
const result = readCsvPart(data.part);
data.partPort.postMessage(result, result.ok ? transferables(result) : []);
data.partPort.close();
runPassHelper(data);
