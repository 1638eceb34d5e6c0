/**
 * Progress of a long command (scan, budget, simulate) on a terminal: main.ts installs a sink that rewrites one line on
 * stderr when stderr is a terminal; runCli and the tests see none (the output they return is unchanged), and a pipe or
 * a file gets nothing. Ctrl-C ends the command at once (Node's default for SIGINT): nothing is written to a file
 * before the work is done, and an output file is written atomically.
 */
export type ProgressSink = (what: string, fraction: number) => void;

let sink: ProgressSink | null = null;

export function setProgressSink(s: ProgressSink | null): void {
  sink = s;
}

/** A callback for the engine's onProgress that reports `what` at most every 200 ms, or undefined without a sink. */
export function progressOf(what: string): ((fraction: number) => void) | undefined {
  const s = sink;
  if (!s) return undefined;
  let last = 0;
  return (fraction) => {
    const now = Date.now();
    if (fraction < 1 && now - last < 200) return;
    last = now;
    s(what, fraction);
  };
}

/** The terminal's sink: "scan: 34 % (Ctrl-C to stop)" rewritten in place, cleared when done. */
export function terminalSink(stream: { write(s: string): unknown }): ProgressSink {
  return (what, fraction) => {
    if (fraction >= 1) stream.write('\r\x1b[K');
    else stream.write(`\r\x1b[K${what}: ${Math.floor(fraction * 100)} % (Ctrl-C to stop)`);
  };
}
