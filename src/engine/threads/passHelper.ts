/**
 * The loop of a pass pool's helper thread: sleeps on a shared control word, and when woken
 * runs its share of the blocks of a pass (blocks b with b % threads = helper index) into
 * the shared per-block slots. Attachments (the design, outcome, weights and buffers, all on
 * SharedArrayBuffers) arrive on a MessagePort read synchronously. Runs until told to exit.
 * The pool's own entry is passWorker.ts; a worker with a first task of its own may call
 * this once that task is done (see PassPool.start).
 */
import { receiveMessageOnPort, type MessagePort } from 'node:worker_threads';
import type { DesignMatrix } from '../design/designMatrix.js';
import { runBlock, type PassBuffers, type PassCommand } from '../fit/blockedPasses.js';
import { COMMAND_ATTACH, COMMAND_EXIT, COMMAND_PASS, type PassAttachment } from './passProtocol.js';

/** What the pool puts in every helper's workerData. */
export interface PassHelperData {
  readonly control: Int32Array;
  readonly index: number;
  readonly threads: number;
  readonly port: MessagePort;
}

export function runPassHelper({ control, index, threads, port }: PassHelperData): void {
  const base = index * 4;
  let attached: { design: DesignMatrix; y: Float64Array; priorWeights: Float64Array | null; buffers: PassBuffers } | null = null;
  let command: PassCommand | null = null;
  let seen = 0;
  port.postMessage({ type: 'ready' });

  for (;;) {
    Atomics.wait(control, base, seen);
    seen = Atomics.load(control, base);
    const code = Atomics.load(control, base + 1);
    if (code === COMMAND_EXIT) break;
    try {
      if (code === COMMAND_ATTACH) {
        const message = receiveMessageOnPort(port)?.message as PassAttachment | undefined;
        if (message === undefined) throw new Error('attachment missing');
        attached = {
          design: { ...message.design, terms: [], modifierIndices: [], productIndices: [], covariateIndices: [], exposureIndex: 1, centre: 0 },
          y: message.y,
          priorWeights: message.priorWeights,
          buffers: message.buffers,
        };
        command = null;
      } else if (code === COMMAND_PASS) {
        const message = receiveMessageOnPort(port)?.message as PassCommand | undefined;
        if (message !== undefined) command = message;
        if (attached === null || command === null) throw new Error('no design attached');
        for (let block = index; block < attached.buffers.blocks; block += threads) {
          runBlock(attached.design, attached.y, attached.priorWeights, attached.buffers, command, block);
        }
      }
      Atomics.store(control, base + 3, 0);
    } catch {
      Atomics.store(control, base + 3, 1);
    }
    Atomics.store(control, base + 2, seen);
    Atomics.notify(control, base + 2);
  }
}
