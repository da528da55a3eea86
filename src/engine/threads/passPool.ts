import { MessageChannel, Worker, type MessagePort, type TransferListItem } from 'node:worker_threads';
import type { DesignMatrix } from '../design/designMatrix.js';
import { createPassBuffers, type ParallelPassRunner, type PassCommand } from '../fit/blockedPasses.js';
import type { ParallelContext } from '../fit/iterativelyReweightedLeastSquares.js';
import { COMMAND_ATTACH, COMMAND_EXIT, COMMAND_PASS, type PassAttachment } from './passProtocol.js';
import { launchFor, type WorkerLaunch } from './workerLaunch.js';

/**
 * A first task for the pool's first helper: that thread is started from `launch` (an entry
 * that does its own work with `workerData` and then calls runPassHelper from passHelper.ts
 * with the same workerData), so that one thread start serves both. The pool is ready once
 * the task is done.
 */
export interface FirstHelperTask {
  readonly launch: WorkerLaunch;
  readonly workerData: Record<string, unknown>;
  readonly transferList: readonly TransferListItem[];
}

function shared<T extends Float64Array | Int32Array>(array: T): T {
  if (array.buffer instanceof SharedArrayBuffer) return array;
  const Constructor = array.constructor as { new (buffer: SharedArrayBuffer): T; BYTES_PER_ELEMENT: number };
  const copy = new Constructor(new SharedArrayBuffer(array.length * Constructor.BYTES_PER_ELEMENT));
  copy.set(array);
  return copy;
}

/**
 * A pool of helper threads that compute their share of the blocks of every pass of a fit,
 * while the calling thread computes its own share and then waits (Atomics) for them. The
 * fit itself stays synchronous; only starting the pool is asynchronous. Helpers are
 * unreferenced, so an idle pool does not keep the process alive.
 */
export class PassPool implements ParallelPassRunner {
  readonly threads: number;
  private readonly workers: Worker[];
  private readonly ports: MessagePort[];
  private readonly control: Int32Array;
  private generation = 0;

  private constructor(workers: Worker[], ports: MessagePort[], control: Int32Array) {
    this.workers = workers;
    this.ports = ports;
    this.control = control;
    this.threads = workers.length + 1;
  }

  /** Starts `helpers` helper threads (the caller is the extra thread), the first with `first`'s task when given. */
  static async start(helpers: number, first: FirstHelperTask | null = null): Promise<PassPool> {
    const control = new Int32Array(new SharedArrayBuffer(4 * 4 * (helpers + 1)));
    const poolLaunch = launchFor(new URL('./passWorker.js', import.meta.url), import.meta.url);
    const workers: Worker[] = [];
    const ports: MessagePort[] = [];
    const ready: Promise<void>[] = [];
    for (let helper = 1; helper <= helpers; helper++) {
      const channel = new MessageChannel();
      const task = helper === 1 ? first : null;
      const launch = task?.launch ?? poolLaunch;
      const worker = new Worker(launch.url, {
        workerData: { ...task?.workerData, ...launch.extraData, control, index: helper, threads: helpers + 1, port: channel.port2 },
        transferList: [channel.port2, ...(task?.transferList ?? [])],
      });
      ready.push(
        new Promise<void>((resolve, reject) => {
          channel.port1.once('message', () => resolve());
          worker.once('error', reject);
        }),
      );
      workers.push(worker);
      ports.push(channel.port1);
    }
    await Promise.all(ready);
    for (const worker of workers) worker.unref();
    for (const port of ports) port.unref();
    return new PassPool(workers, ports, control);
  }

  private signal(command: number): void {
    this.generation++;
    this.workers.forEach((_, k) => {
      const base = (k + 1) * 4;
      Atomics.store(this.control, base + 1, command);
      Atomics.store(this.control, base, this.generation);
      Atomics.notify(this.control, base);
    });
  }

  private waitAll(): void {
    let failed = false;
    this.workers.forEach((_, k) => {
      const base = (k + 1) * 4;
      for (;;) {
        const done = Atomics.load(this.control, base + 2);
        if (done === this.generation) break;
        Atomics.wait(this.control, base + 2, done, 60_000);
      }
      if (Atomics.load(this.control, base + 3) === 1) failed = true;
    });
    if (failed) throw new Error('a pass helper thread failed');
  }

  /**
   * Shares a design, outcome and weights with the helpers (copying to SharedArrayBuffers
   * what is not shared yet) and returns the context a fit passes to its passes.
   */
  attach(design: DesignMatrix, y: Float64Array, priorWeights: Float64Array | null = null): ParallelContext & { design: DesignMatrix; y: Float64Array } {
    const sharedDesign: DesignMatrix = { ...design, cellOfRow: shared(design.cellOfRow), free: shared(design.free), offset: design.offset ? shared(design.offset) : null };
    const sharedY = shared(y);
    const sharedWeights = priorWeights === null ? null : shared(priorWeights);
    const buffers = createPassBuffers(sharedDesign, true);
    const attachment: PassAttachment = {
      design: {
        rows: sharedDesign.rows, columns: sharedDesign.columns, cellCount: sharedDesign.cellCount,
        cellOfRow: sharedDesign.cellOfRow, cellTerms: sharedDesign.cellTerms, cellValues: sharedDesign.cellValues,
        freeTerms: sharedDesign.freeTerms, free: sharedDesign.free, offset: sharedDesign.offset ?? null,
      },
      y: sharedY,
      priorWeights: sharedWeights,
      buffers,
    };
    for (const port of this.ports) port.postMessage(attachment);
    this.signal(COMMAND_ATTACH);
    this.waitAll();
    return { runner: this, buffers, design: sharedDesign, y: sharedY };
  }

  start(command: PassCommand): void {
    for (const port of this.ports) port.postMessage(command);
    this.signal(COMMAND_PASS);
  }

  finish(): void {
    this.waitAll();
  }

  /** Stops the helpers. */
  async close(): Promise<void> {
    this.signal(COMMAND_EXIT);
    await Promise.all(this.workers.map((worker) => worker.terminate()));
  }
}

let sharedPool: Promise<PassPool> | null = null;
let sharedPoolHelpers = 0;

/**
 * The process-wide pool with `helpers` helpers, started on first use and then reused. With
 * `first`, a new pool is started whose first helper does that task first (see
 * {@link FirstHelperTask}); it then replaces the process-wide pool.
 */
export function passPool(helpers: number, first: FirstHelperTask | null = null): Promise<PassPool> {
  if (sharedPool === null || sharedPoolHelpers !== helpers || first !== null) {
    const previous = sharedPool;
    sharedPoolHelpers = helpers;
    sharedPool = PassPool.start(helpers, first);
    if (previous !== null) void previous.then((pool) => pool.close(), () => undefined);
  }
  return sharedPool;
}
