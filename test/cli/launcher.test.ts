/** bin/spinyard.js as a user runs it: a separate node process, from any working directory, no build step. */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DESIGN_V1 } from '../beamline/examples.ts';

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
});
