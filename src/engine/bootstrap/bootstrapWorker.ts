/**
 * Worker-thread entry of the bootstrap: takes replicate indices from the shared counter
 * until none are left, writing each replicate's coefficients into the shared result
 * matrix. Which thread computes a replicate does not matter: each has its own stream.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { bootstrapReplicate, type BootstrapJob } from './bootstrapReplicate.js';
import { CONTROL_CANCEL, CONTROL_DONE, CONTROL_NEXT, type BootstrapWorkerData } from './workerProtocol.js';

const data = workerData as BootstrapWorkerData;
const job: BootstrapJob = {
  design: { ...data.design, terms: [] },
  y: data.y,
  family: data.family,
  start: data.start,
  replicates: data.replicates,
  seed: data.seed,
  jointCellOfRow: data.jointCellOfRow,
  jointCells: data.jointCells,
};
const counts = new Float64Array(data.design.rows);
const p = data.design.columns;
let sinceReport = 0;
for (;;) {
  if (Atomics.load(data.control, CONTROL_CANCEL) === 1) break;
  const index = Atomics.add(data.control, CONTROL_NEXT, 1);
  if (index >= data.replicates) break;
  data.status[index] = bootstrapReplicate(job, index, counts, data.results, index * p);
  Atomics.add(data.control, CONTROL_DONE, 1);
  if (++sinceReport >= data.progressEvery) {
    sinceReport = 0;
    parentPort?.postMessage({ type: 'progress' });
  }
}
parentPort?.postMessage({ type: 'finished' });
