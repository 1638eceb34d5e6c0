/** The engine's errors: a line it cannot run (with a message naming what and where), and a cancelled run. */
export class RunError extends Error {}
export class CancelledError extends Error {}
/**
 * Work a step would take that is out of proportion (spectral.ts: a state whose frequency terms would multiply past
 * MAX_SPEC_TERMS); the walk turns it into a RunError naming the element.
 */
export class CostError extends Error {}
