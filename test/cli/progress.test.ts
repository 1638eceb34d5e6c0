/** Progress on a terminal (src/cli/progress.ts): nothing without a sink, one rewritten line with one, cleared at the end. */
import { afterEach, describe, expect, it } from 'vitest';
import { progressOf, setProgressSink, terminalSink } from '../../src/cli/progress.ts';
import { runCli } from '../../src/cli/cli.ts';

afterEach(() => setProgressSink(null));

describe('progress of a long command', () => {
  it('is absent without a sink (a pipe, a file, the tests): the engine gets no callback', () => {
    expect(progressOf('scan')).toBeUndefined();
  });

  it('rewrites one line on the terminal with the percentage and how to stop, and clears it when done', () => {
    const written: string[] = [];
    setProgressSink(terminalSink({ write: (s: string) => written.push(s) }));
    const p = progressOf('scan')!;
    p(0.345);
    p(0.5); // within 200 ms of the last: not written
    p(1);
    expect(written).toEqual(['\r\x1b[Kscan: 34 % (Ctrl-C to stop)', '\r\x1b[K']);
  });

  it('a scan reports through the sink and returns the same output as without one', () => {
    const argv = ['scan', new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url).pathname,
      '--param', 'M2.axis.roll', '--from', '0 deg', '--to', '180 deg', '--points', '7', '--csv'];
    const plain = runCli(argv);
    const seen: number[] = [];
    setProgressSink((what, f) => {
      expect(what).toBe('scan');
      seen.push(f);
    });
    const withSink = runCli(argv);
    expect(withSink.stdout).toBe(plain.stdout);
    expect(withSink.stderr).toBe(plain.stderr);
    expect(seen.at(-1)).toBe(1);
  });
});
