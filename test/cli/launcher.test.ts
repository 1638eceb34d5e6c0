/**
 * bin/spinyard.js as a user runs it: a separate node process, from any working directory, running the
 * plain-JavaScript build of the command line (scripts/cli-build.mjs), made at `npm ci` or on first use.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, rmSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DESIGN_V1 } from '../beamline/examples.ts';
import { cliEntry, cliStamp } from '../../scripts/cli-build.mjs';

const root = resolve(import.meta.dirname, '../..');
const bin = join(root, 'bin', 'spinyard.js');
let dir: string;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-bin-'));
  writeFileSync(join(dir, 'roll.spinyard'), DESIGN_V1);
});
afterAll(() => {
  rmSync(dir, { recursive: true, force: true });
});

const spinyard = (args: string[], cwd = dir) => spawnSync(process.execPath, [bin, ...args], { cwd, encoding: 'utf8', timeout: 60_000 });

describe('bin/spinyard.js', () => {
  it('prints the usage from another working directory', () => {
    const r = spinyard(['--help']);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/^spinyard: /);
    expect(r.stderr).toBe('');
  });

  it('runs a file relative to the working directory and exits 0', () => {
    const r = spinyard(['run', 'roll.spinyard', '--json']);
    expect(r.status).toBe(0);
    expect(JSON.parse(r.stdout).format).toBe('spinyard.result');
  });

  it('exits 2 on bad input with stderr only', () => {
    const r = spinyard(['run', 'missing.spinyard']);
    expect(r.status).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toBe('cannot read missing.spinyard: no such file\n');
  });

  it('is what `npx spinyard` runs in the checkout', () => {
    const r = spawnSync('npx', ['--no-install', 'spinyard', '--version'], { cwd: root, encoding: 'utf8', timeout: 60_000 });
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/^spinyard \d+\.\d+\.\d+\n$/);
  });

  it('runs the build of the current sources, not a transpiler', () => {
    const r = spinyard(['--version']);
    expect(r.status).toBe(0);
    expect(existsSync(cliEntry(cliStamp()))).toBe(true);
  });
});

describe('the build stamp (scripts/cli-build.mjs)', () => {
  it('changes when a source is modified or added, so the next call builds again', () => {
    const tree = mkdtempSync(join(tmpdir(), 'spinyard-stamp-'));
    try {
      mkdirSync(join(tree, 'src', 'cli'), { recursive: true });
      const main = join(tree, 'src', 'cli', 'main.ts');
      writeFileSync(main, 'export {};\n');
      writeFileSync(join(tree, 'package.json'), '{}\n');
      utimesSync(main, new Date(1_700_000_000_000), new Date(1_700_000_000_000));
      utimesSync(join(tree, 'package.json'), new Date(1_700_000_000_000), new Date(1_700_000_000_000));
      const first = cliStamp(tree);
      expect(first).toBe('1700000000000-2');
      utimesSync(main, new Date(1_700_000_005_000), new Date(1_700_000_005_000));
      expect(cliStamp(tree)).toBe('1700000005000-2');
      writeFileSync(join(tree, 'src', 'cli', 'extra.ts'), 'export {};\n');
      utimesSync(join(tree, 'src', 'cli', 'extra.ts'), new Date(1_600_000_000_000), new Date(1_600_000_000_000));
      expect(cliStamp(tree)).toBe('1700000005000-3');
    } finally {
      rmSync(tree, { recursive: true, force: true });
    }
  });
});
