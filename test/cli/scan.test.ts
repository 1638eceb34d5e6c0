/** `spinyard scan`: arguments, the three outputs, messages, and -o through deliver. */
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli } from '../../src/cli/cli.ts';
import { sameInThreads, sameThroughBuilt } from '../fixtures/cli-threads.ts';
import { deliver } from '../../src/cli/deliver.ts';

const C = new URL('../../samples/bench-c-roll-calibration.spinyard', import.meta.url).pathname;
let dir: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-scan-'));
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const roll = ['--param', 'M2.axis.roll', '--from', '0 deg', '--to', '180 deg', '--points', '5'];

describe('spinyard scan FILE', () => {
  it('prints a table of the points with each detector\'s yield and counts ± σ', () => {
    const out = runCli(['scan', C, ...roll]);
    expect(out.stderr).toBe('');
    expect(out.code).toBe(0);
    const lines = out.stdout.split('\n');
    expect(lines[1]).toBe('  M2.axis.roll from 0 deg to 180 deg in 5 points');
    expect(lines[2]).toBe('  as set in the document: M2.axis.roll = 30 deg');
    const head = lines.findIndex((l) => l.trimStart().startsWith('M2.axis.roll (deg)'));
    expect(lines[head]).toMatch(/D1 yield\s+D1 counts ± σ\s+D2 yield/);
    // 90°: D1 = ½·cos²(45°) = 0.25; counts (2e9·0.9·0.25 + 5 /s)·10 s = 4.5e9 + 50, σ = √N = 6.7e4 to 2 figures,
    // the counts to σ's place (1e3)
    expect(lines[head + 3]).toMatch(/^\s+90\s+0\.25\s+4\.500000e9 ± 6\.7e4\s/);
    // one notation per column: D1's background-only 50 counts at 180° are written with an exponent beside 9e9
    expect(lines[head + 5]).toMatch(/^\s+180\s+0\s+5\.00e1 ± 7\.1e0\s+0\.5\s+9\.000000e9 ± 9\.5e4\s/);
  });

  it('gives JSON (spinyard.scan) and CSV', () => {
    const j = JSON.parse(runCli(['scan', C, ...roll, '--json']).stdout);
    expect(j.format).toBe('spinyard.scan');
    expect(j.points).toHaveLength(5);
    const csv = runCli(['scan', C, ...roll, '--csv']).stdout;
    expect(csv.split('\r\n')[0]).toMatch(/^M2\.axis\.roll \[deg\],D1 yield,/);
    expect(csv.split('\r\n')).toHaveLength(7);
  });

  it('scans a grid of two and spaces one of them by equal ratios', () => {
    const out = runCli(['scan', C, ...roll.slice(0, 6), '--points', '2', '--param', 'oven.flux', '--from', '1e8 /s', '--to', '1e10 /s', '--points', '3', '--log', 'oven.flux', '--csv']);
    expect(out.stderr).toBe('');
    const rows = out.stdout.trimEnd().split('\r\n').slice(1).map((r) => r.split(',').slice(0, 2));
    expect(rows).toEqual([['0', '100000000'], ['0', '1000000000'], ['0', '10000000000'], ['180', '100000000'], ['180', '1000000000'], ['180', '10000000000']]);
  });

  it('lists the set-points of a file with --param list', () => {
    const out = runCli(['scan', C, '--param', 'list']);
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/M2\.axis\.roll\s+30 deg\s+30 deg\s+elements\[1\]\.axis\.roll/);
    expect(out.stdout).toMatch(/D1\.gap\s+0 mm\s+\(default\)/);
  });

  it('names what is wrong, with exit 2 and nothing on stdout', () => {
    const cases: [string[], RegExp][] = [
      [['scan', new URL('../../samples/bench-a-spin32-rotator.spinyard', import.meta.url).pathname], /missing --param/],
      [['scan', C, '--param', 'M2.axis.rol', '--from', '0', '--to', '1', '--points', '2'], /no parameter "M2\.axis\.rol".*M2\.axis\.roll/],
      [['scan', C, '--param', 'M2.axis.roll', '--from', '0 mm', '--to', '1 deg', '--points', '2'], /--from: expected an angle/],
      [['scan', C, '--param', 'M2.axis.roll', '--from', '0 deg', '--to', '1 deg'], /--points is given 0 times for 1 --param/],
      [['scan', C, '--param', 'M2.axis.roll', '--from', '0 deg', '--to', '1 deg', '--points', '2.5'], /--points: a whole number/],
      [['scan', C, ...roll, '--log', 'oven.flux'], /--log oven\.flux: not one of the scanned/],
      [['scan', C, ...roll, '--json', '--csv'], /choose one/],
      [['scan', C, ...roll, '-o', C], /never written over its document/],
    ];
    for (const [argv, msg] of cases) {
      const out = runCli(argv);
      expect(out.code, argv.join(' ')).toBe(2);
      expect(out.stdout).toBe('');
      expect(out.stderr).toMatch(msg);
    }
  });

  it('writes -o OUT atomically through deliver and says so', async () => {
    const target = join(dir, 'roll.csv');
    const out = await deliver(runCli(['scan', C, ...roll, '--csv', '-o', target]));
    expect(out.code).toBe(0);
    expect(out.stdout).toBe(`${target}: scan (CSV) of ${C}\n`);
    expect(readFileSync(target, 'utf8')).toBe(runCli(['scan', C, ...roll, '--csv']).stdout);
    expect(existsSync(join(dir, 'roll.csv.part'))).toBe(false);
  });
});

describe('spinyard scan FILE with a scan kept in the document', () => {
  it('runs the document\'s scan without --param', () => {
    const out = runCli(['scan', C, '--csv']);
    expect(out.stderr).toBe('');
    const rows = out.stdout.trimEnd().split('\r\n');
    // bench C keeps "analyser roll, 0 to 180 deg": M2.axis.roll in 37 points
    expect(rows).toHaveLength(38);
    expect(rows[0].startsWith('M2.axis.roll [deg],')).toBe(true);
    expect(rows[37].split(',')[0]).toBe('180');
  });

  it('refuses --stored beside --param, and a number past the list', () => {
    expect(runCli(['scan', C, ...roll, '--stored', '1']).stderr).toMatch(/--stored and --param/);
    const out = runCli(['scan', C, '--stored', '2']);
    expect(out.code).toBe(2);
    expect(out.stderr).toMatch(/--stored 2: .* keeps 1 scans; choose one with --stored N:\n {2}1: analyser roll, 0 to 180 deg/);
  });
});

describe('spinyard scan --workers N', () => {
  it('gives the same result, byte for byte, in 1, 2 and 3 worker threads', async () => {
    await sameInThreads(['scan', new URL('../../samples/bench-h-rb87-mj-then-eigenstate.spinyard', import.meta.url).pathname,
      '--param', 'M1.axis.roll', '--from', '0 deg', '--to', '90 deg', '--points', '7', '--param', 'oven.flux', '--from', '1e9 /s', '--to', '2e9 /s', '--points', '2', '--json']);
    // each worker thread loads the engine afresh: about 20 s on a quiet two-core machine, several times that under a full suite
  }, 240_000);

  it('does the same through the built command line (its worker module is built beside it)', () => {
    // the oven's flux: no magnet's set-point, so the points are dealt out to the workers
    const out = sameThroughBuilt(['scan', C, '--param', 'oven.flux', '--from', '1e9 /s', '--to', '3e9 /s', '--points', '40', '--csv']);
    expect(out.split('\r\n')).toHaveLength(42);
  }, 240_000);

  it('runs a scan whose rows are formed as a batch in one thread, so that --workers does not change a digit', () => {
    // bench A's last analyser rolled: its points after the first are formed from that run (engine/batch.ts)
    const argv = ['scan', new URL('../../samples/bench-a-spin32-rotator.spinyard', import.meta.url).pathname,
      '--param', 'M2.axis.roll', '--from', '0 deg', '--to', '180 deg', '--points', '301', '--json'];
    const one = runCli([...argv, '--workers', '1']);
    const two = runCli([...argv, '--workers', '2']);
    expect(two.job).toBeUndefined();
    expect(two.code).toBe(0);
    expect(two.stdout).toBe(one.stdout);
  });

  it('refuses a bad number of workers', () => {
    expect(runCli(['scan', C, ...roll, '--workers', '0']).stderr).toMatch(/--workers: a whole number from 1 to 256/);
  });
});

describe('spinyard scan numbers', () => {
  it('shows a yield below the engine\'s round-off as 0 (bench C\'s D1 at 180°: cos²(90°) of a binary π/2)', () => {
    const out = runCli(['scan', C, '--param', 'M2.axis.roll', '--from', '180 deg', '--to', '180 deg', '--points', '1']);
    const row = out.stdout.split('\n').find((l) => /^\s+180\s/.test(l))!;
    // alone in its column, 50 ± √50 is written plainly: σ to 2 figures, the counts to its place
    expect(row).toMatch(/^\s+180\s+0\s+50\.0 ± 7\.1\s+0\.5\s/);
    // the JSON keeps the number the engine computed
    const j = JSON.parse(runCli(['scan', C, '--param', 'M2.axis.roll', '--from', '180 deg', '--to', '180 deg', '--points', '1', '--json']).stdout);
    expect(j.points[0].detectors[0].yield).toBeLessThan(1e-12);
  });
});
