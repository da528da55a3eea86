/**
 * Helper thread of the pass pool: runs the helper loop (passHelper.ts) with the control
 * words, index and port the pool gave it.
 */
import { workerData } from 'node:worker_threads';
import { runPassHelper, type PassHelperData } from './passHelper.js';

runPassHelper(workerData as PassHelperData);
