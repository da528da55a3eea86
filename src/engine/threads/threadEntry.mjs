// Entry of a bootstrap worker thread when the engine runs from TypeScript sources (under
// tsx or vitest): Node 20 does not apply the parent's module hooks to a worker, so the
// worker registers tsx's hooks itself and then loads the TypeScript entry.
import { workerData } from 'node:worker_threads';

const { register } = await import(workerData.tsxApi);
register();
await import(workerData.entry);
