/**
 * The Crossgrain statistics engine. Pure TypeScript: given columns and a specification it
 * returns a plain-JSON result; see README.md in this folder for the layout and the flow.
 */
export { runAnalysis } from './analysis/runAnalysis.js';
export { ENGINE_VERSION } from './version.js';
export * from './errors.js';
export type * from './types.js';
