/** src/cli/find-browser.ts: the order SPINYARD_BROWSER, system browser, npm package; one clear line when none. */
import { chmodSync, existsSync, mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BROWSER_ENV, BrowserMissingError, findBrowser, fixedPlaces, systemBrowser } from '../../src/cli/find-browser.ts';

let dir: string;
let fake: string;
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'spinyard-browser-'));
  fake = join(dir, 'bin', 'chromium');
  mkdirSync(join(dir, 'bin'));
  writeFileSync(fake, '#!/bin/sh\n');
  chmodSync(fake, 0o755);
  writeFileSync(join(dir, 'plain'), 'not executable');
});
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('findBrowser', () => {
  it('uses the executable named by SPINYARD_BROWSER first, and says so', async () => {
    const b = await findBrowser({ [BROWSER_ENV]: fake, PATH: '' });
    expect(b).toEqual({ executablePath: fake, source: 'environment', description: `browser from ${BROWSER_ENV}: ${fake}` });
  });

  it('refuses a SPINYARD_BROWSER that is missing or not executable instead of falling back', async () => {
    await expect(findBrowser({ [BROWSER_ENV]: join(dir, 'none') })).rejects.toThrow(`${BROWSER_ENV}=${join(dir, 'none')}: no such file`);
    if (process.platform !== 'win32') {
      await expect(findBrowser({ [BROWSER_ENV]: join(dir, 'plain') })).rejects.toBeInstanceOf(BrowserMissingError);
    }
  });

  it.runIf(process.platform === 'linux')('finds a Chromium on PATH, after the fixed install places', () => {
    const fixed = fixedPlaces('linux', {}).find((p) => existsSync(p));
    expect(systemBrowser({ PATH: join(dir, 'bin') }, 'linux')).toBe(fixed ?? fake);
    // a folder on PATH without a browser in it adds nothing
    expect(systemBrowser({ PATH: dir }, 'linux')).toBe(fixed);
  });

  it('finds a browser on this machine with nothing set, and it is an executable file', async () => {
    const b = await findBrowser({ PATH: process.env.PATH });
    expect(['system', 'npm']).toContain(b.source);
    expect(b.description).toContain(b.executablePath);
  });
});
