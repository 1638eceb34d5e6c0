/**
 * The Chromium that prints setup sheets to PDF (`spinyard sheet -o OUT.pdf`) and that the browser tests and
 * benchmarks drive. Looked for in this order, and the first one found is used:
 *   1. SPINYARD_BROWSER, an executable named by the user (set but unusable is an error, never skipped);
 *   2. a system Chromium or Chrome at the usual places of the platform or on PATH;
 *   3. the Chromium shipped inside the npm package @sparticuz/chromium (installed by `npm ci`), unpacked
 *      once into node_modules/.cache/spinyard-chromium-VERSION/.
 * Nothing is downloaded: a machine with none of the three gets one line saying what to do.
 */
import { accessSync, constants, existsSync, mkdirSync, renameSync, rmSync } from 'node:fs';
import { createRequire } from 'node:module';
import { delimiter, dirname, join } from 'node:path';

export const BROWSER_ENV = 'SPINYARD_BROWSER';

export type BrowserSource = 'environment' | 'system' | 'npm';

export interface FoundBrowser {
  readonly executablePath: string;
  readonly source: BrowserSource;
  /** One line for a log: which browser and why ("system Chromium /usr/bin/chromium"). */
  readonly description: string;
}

/** No usable browser: `message` is one line that says what was looked for and what to do. */
export class BrowserMissingError extends Error {
  override name = 'BrowserMissingError';
}

/** Flags for a headless print or test run: no sandbox (root in CI), no GPU, nothing that phones home. */
export const BROWSER_ARGS: readonly string[] = [
  '--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update',
  '--disable-sync', '--no-first-run', '--no-default-browser-check', '--disable-domain-reliability', '--no-pings',
];

/** Names of a system Chromium or Chrome on PATH, and fixed install places, per platform. */
const PATH_NAMES = ['chromium', 'chromium-browser', 'google-chrome', 'google-chrome-stable', 'chrome'];
export function fixedPlaces(platform: NodeJS.Platform, env: NodeJS.ProcessEnv): string[] {
  if (platform === 'darwin') {
    return [
      '/Applications/Chromium.app/Contents/MacOS/Chromium',
      '/Applications/Google Chrome.app/Contents/MacOS/Google Chrome',
    ];
  }
  if (platform === 'win32') {
    const roots = [env.PROGRAMFILES, env['PROGRAMFILES(X86)'], env.LOCALAPPDATA].filter((r): r is string => !!r);
    return roots.flatMap((r) => [join(r, 'Chromium', 'Application', 'chrome.exe'), join(r, 'Google', 'Chrome', 'Application', 'chrome.exe')]);
  }
  return ['/usr/bin/chromium', '/usr/bin/chromium-browser', '/usr/bin/google-chrome', '/usr/bin/google-chrome-stable', '/snap/bin/chromium'];
}

function isExecutable(path: string): boolean {
  try {
    accessSync(path, process.platform === 'win32' ? constants.F_OK : constants.X_OK);
    return true;
  } catch {
    return false;
  }
}

/** A system Chromium or Chrome, or undefined. */
export function systemBrowser(env: NodeJS.ProcessEnv = process.env, platform: NodeJS.Platform = process.platform): string | undefined {
  for (const p of fixedPlaces(platform, env)) if (isExecutable(p)) return p;
  const exe = platform === 'win32' ? '.exe' : '';
  for (const dir of (env.PATH ?? '').split(delimiter)) {
    if (!dir) continue;
    for (const name of PATH_NAMES) {
      const p = join(dir, name + exe);
      if (isExecutable(p)) return p;
    }
  }
  return undefined;
}

interface NpmChromium {
  executablePath(input?: string): Promise<string>;
}

/** The folder of the installed @sparticuz/chromium package and its version, or undefined when it is not installed. */
function npmPackage(): { dir: string; version: string } | undefined {
  const require = createRequire(import.meta.url);
  let entry: string;
  try {
    entry = require.resolve('@sparticuz/chromium');
  } catch {
    return undefined;
  }
  // entry is PACKAGE/build/cjs/index.cjs
  const dir = dirname(dirname(dirname(entry)));
  const version = (require(join(dir, 'package.json')) as { version: string }).version;
  return { dir, version };
}

/**
 * Unpacks the npm package's Chromium (brotli archives inside the package, no network) into a versioned folder
 * beside it and returns the executable. The package unpacks into os.tmpdir(), so TMPDIR points at a private
 * folder for the call; the folder is renamed into place when complete, so concurrent callers never see half
 * an unpacked browser.
 */
async function npmBrowser(): Promise<string | undefined> {
  const pkg = npmPackage();
  if (!pkg) return undefined;
  const cacheRoot = join(dirname(dirname(pkg.dir)), '.cache');
  const target = join(cacheRoot, `spinyard-chromium-${pkg.version}`);
  const exe = join(target, 'chromium');
  if (isExecutable(exe)) return exe;
  const work = join(cacheRoot, `spinyard-chromium-${pkg.version}.part-${process.pid}-${Date.now()}`);
  mkdirSync(work, { recursive: true });
  const savedTmp = process.env.TMPDIR;
  try {
    process.env.TMPDIR = work;
    const mod = (await import('@sparticuz/chromium')) as unknown as { default: NpmChromium };
    const unpacked = await mod.default.executablePath(join(pkg.dir, 'bin'));
    if (dirname(unpacked) !== work) throw new BrowserMissingError(`the npm Chromium unpacked to ${unpacked}, not into ${work}`);
  } catch (e) {
    rmSync(work, { recursive: true, force: true });
    throw e;
  } finally {
    if (savedTmp === undefined) delete process.env.TMPDIR;
    else process.env.TMPDIR = savedTmp;
  }
  try {
    renameSync(work, target);
  } catch {
    // another process put a complete copy in place first: use it
    rmSync(work, { recursive: true, force: true });
  }
  return isExecutable(exe) ? exe : undefined;
}

const MISSING = `no Chromium or Chrome found: set ${BROWSER_ENV} to a browser executable, install Chromium, or run "npm ci" in the Spinyard checkout (it installs @sparticuz/chromium)`;

/** Finds the browser (see the module comment). Throws BrowserMissingError with one line when there is none. */
export async function findBrowser(env: NodeJS.ProcessEnv = process.env): Promise<FoundBrowser> {
  const named = env[BROWSER_ENV];
  if (named !== undefined && named !== '') {
    if (!existsSync(named)) throw new BrowserMissingError(`${BROWSER_ENV}=${named}: no such file`);
    if (!isExecutable(named)) throw new BrowserMissingError(`${BROWSER_ENV}=${named}: not an executable`);
    return { executablePath: named, source: 'environment', description: `browser from ${BROWSER_ENV}: ${named}` };
  }
  const sys = systemBrowser(env);
  if (sys) return { executablePath: sys, source: 'system', description: `system browser ${sys}` };
  const npm = await npmBrowser();
  if (npm) return { executablePath: npm, source: 'npm', description: `Chromium of the npm package @sparticuz/chromium (${npm})` };
  throw new BrowserMissingError(MISSING);
}
