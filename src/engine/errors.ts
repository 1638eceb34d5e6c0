/** The engine's errors: a line it cannot run (with a message naming what and where), and a cancelled run. */
export class RunError extends Error {}
export class CancelledError extends Error {}
