/**
 * The engine's version, recorded in every result. Bump it whenever a change can alter any
 * number in a result (a formula, a default, the random stream), so that an audited re-run
 * states which engine produced it.
 */
export const ENGINE_VERSION = 'crossgrain-engine/1.2.0';
