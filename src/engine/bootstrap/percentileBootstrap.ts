import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import { launchFor, type WorkerLaunch } from '../threads/workerLaunch.js';
import type { DesignMatrix } from '../design/designMatrix.js';
import { AnalysisCancelledError } from '../errors.js';
import { bootstrapReplicate, type BootstrapJob } from './bootstrapReplicate.js';
import { CONTROL_CANCEL, CONTROL_DONE, type BootstrapWorkerData } from './workerProtocol.js';

export interface BootstrapRunOptions {
  /** Worker threads; 0 or 1 computes in-process. */
  readonly threads: number;
  readonly signal?: AbortSignal;
  readonly onProgress?: (fraction: number) => void;
}

/** Default thread count: both cores of the reference machine, never more than the machine has. */
export function defaultThreadCount(): number {
  return Math.max(1, Math.min(2, availableParallelism()));
}

function sharedCopy<T extends Float64Array | Int32Array>(array: T): T {
  if (array.buffer instanceof SharedArrayBuffer) return array;
  const Constructor = array.constructor as { new (buffer: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };
  const copy = new Constructor(new SharedArrayBuffer(array.length * Constructor.BYTES_PER_ELEMENT));
  copy.set(array);
  return copy;
}

function shareDesign(design: DesignMatrix): BootstrapWorkerData['design'] {
  return {
    rows: design.rows,
    columns: design.columns,
    terms: [],
    cellCount: design.cellCount,
    cellOfRow: sharedCopy(design.cellOfRow),
    cellTerms: design.cellTerms,
    cellValues: design.cellValues,
    freeTerms: design.freeTerms,
    free: sharedCopy(design.free),
    exposureIndex: design.exposureIndex,
    modifierIndices: [...design.modifierIndices],
    productIndices: [...design.productIndices],
    covariateIndices: [...design.covariateIndices],
    centre: design.centre,
    offset: design.offset ? sharedCopy(design.offset) : null,
  };
}

/**
 * How to start a bootstrap worker (see threads/workerLaunch.ts).
 */
function workerLaunch(): WorkerLaunch {
  return launchFor(new URL('./bootstrapWorker.js', import.meta.url), import.meta.url);
}

/** Replicates' coefficients (row-major replicates × p, NaN rows when left out) and how each ended. */
export interface BootstrapReplicates {
  readonly coefficients: Float64Array;
  readonly status: Int32Array;
}

/**
 * Runs the replicates of a percentile bootstrap (Efron and Tibshirani 1993, ch. 13;
 * Assmann, Hosmer, Lemeshow and Mundt, Epidemiology 1996;7:90-92) and returns their
 * coefficients as a row-major `replicates × p` matrix (NaN rows for failed refits) with
 * each replicate's status (bootstrapReplicate.ts).
 * Replicate r always uses random stream r of the seed, so the matrix is identical bit for
 * bit whether it is computed in-process or by any number of worker threads.
 *
 * @throws AnalysisCancelledError when the signal aborts.
 */
export async function bootstrapCoefficients(job: BootstrapJob, options: BootstrapRunOptions): Promise<BootstrapReplicates> {
  const p = job.design.columns;
  const { signal, onProgress } = options;
  if (signal?.aborted) throw new AnalysisCancelledError();
  const progressEvery = Math.max(1, Math.floor(job.replicates / 100));

  if (options.threads <= 1) {
    const results = new Float64Array(job.replicates * p);
    const status = new Int32Array(job.replicates);
    const counts = new Float64Array(job.design.rows);
    for (let index = 0; index < job.replicates; index++) {
      if (signal?.aborted) throw new AnalysisCancelledError();
      status[index] = bootstrapReplicate(job, index, counts, results, index * p);
      if ((index + 1) % progressEvery === 0) {
        onProgress?.((index + 1) / job.replicates);
        // Yield so that an abort can be delivered.
        if (signal !== undefined) await new Promise((resolve) => setImmediate(resolve));
      }
    }
    return { coefficients: results, status };
  }

  const results = new Float64Array(new SharedArrayBuffer(job.replicates * p * 8));
  const status = new Int32Array(new SharedArrayBuffer(job.replicates * 4));
  const control = new Int32Array(new SharedArrayBuffer(3 * 4));
  const workerData: BootstrapWorkerData = {
    design: shareDesign(job.design),
    y: sharedCopy(job.y),
    family: job.family,
    start: job.start,
    replicates: job.replicates,
    seed: job.seed,
    results,
    status,
    jointCellOfRow: job.jointCellOfRow === null ? null : sharedCopy(job.jointCellOfRow),
    jointCells: job.jointCells,
    control,
    progressEvery,
  };
  const launch = workerLaunch();
  const workers: Worker[] = [];
  let lastReported = 0;
  await new Promise<void>((resolve, reject) => {
    let finished = 0;
    let settled = false;
    const stopAll = () => {
      Atomics.store(control, CONTROL_CANCEL, 1);
      for (const worker of workers) void worker.terminate();
    };
    const onAbort = () => {
      if (settled) return;
      settled = true;
      stopAll();
      reject(new AnalysisCancelledError());
    };
    signal?.addEventListener('abort', onAbort, { once: true });
    for (let t = 0; t < options.threads; t++) {
      const worker = new Worker(launch.url, { workerData: { ...workerData, ...launch.extraData } });
      workers.push(worker);
      worker.on('message', (message: { type: string }) => {
        if (message.type === 'progress') {
          const done = Atomics.load(control, CONTROL_DONE);
          if (done > lastReported) {
            lastReported = done;
            onProgress?.(done / job.replicates);
          }
        } else if (message.type === 'finished') {
          finished++;
          void worker.terminate();
          if (finished === options.threads && !settled) {
            settled = true;
            signal?.removeEventListener('abort', onAbort);
            resolve();
          }
        }
      });
      worker.on('error', (error) => {
        if (settled) return;
        settled = true;
        stopAll();
        signal?.removeEventListener('abort', onAbort);
        reject(error);
      });
    }
  });
  onProgress?.(1);
  return { coefficients: results, status };
}
