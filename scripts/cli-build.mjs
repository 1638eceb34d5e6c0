// The command line, built once into plain JavaScript so that `spinyard` starts without a transpiler.
// `npm ci` builds it (the package's `prepare` step); bin/spinyard.js builds it again on first use when a
// source is newer than the build. A build lives in dist-cli/<stamp>/, where the stamp is the newest
// modification time and the number of the files it is built from: a build is complete before it is renamed
// into place, so two commands started together never load half of one, and an edited source is picked up
// at the next call.
//   node scripts/cli-build.mjs [--force]
import { existsSync, mkdirSync, readdirSync, renameSync, rmSync, statSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const OUT = path.join(ROOT, 'dist-cli');
/** What the CLI is built from: a change in any of these makes a new build. */
const INPUTS = ['src', 'package.json', 'package-lock.json', 'scripts/cli-build.mjs'];
/** Loaded from node_modules at run time, only by `sheet -o OUT.pdf`. */
const EXTERNAL = ['playwright-core', '@sparticuz/chromium'];

function walk(p, acc) {
  let s;
  try {
    s = statSync(p);
  } catch {
    return;
  }
  if (s.isDirectory()) {
    for (const n of readdirSync(p)) walk(path.join(p, n), acc);
  } else {
    acc.n += 1;
    if (s.mtimeMs > acc.newest) acc.newest = s.mtimeMs;
  }
}

/** The stamp of the current sources: "<newest mtime in ms>-<file count>". */
export function cliStamp(root = ROOT) {
  const acc = { newest: 0, n: 0 };
  for (const p of INPUTS) walk(path.join(root, p), acc);
  return `${Math.floor(acc.newest)}-${acc.n}`;
}

/** The entry of the build for `stamp`, whether or not it exists yet. */
export function cliEntry(stamp) {
  return path.join(OUT, stamp, 'main.mjs');
}

/** Builds the CLI for `stamp` unless that build exists (or `force`); returns its entry. */
export async function buildCli(stamp = cliStamp(), { force = false } = {}) {
  const dir = path.join(OUT, stamp);
  if (!force && existsSync(path.join(dir, 'main.mjs'))) return path.join(dir, 'main.mjs');
  const { build } = await import('esbuild');
  const work = `${dir}.part-${process.pid}-${Date.now()}`;
  mkdirSync(work, { recursive: true });
  try {
    await build({
      absWorkingDir: ROOT,
      entryPoints: { main: 'src/cli/main.ts', 'scan-worker': 'src/cli/scan-worker.ts', 'budget-worker': 'src/cli/budget-worker.ts' },
      bundle: true,
      splitting: true,
      platform: 'node',
      format: 'esm',
      target: 'node20',
      outdir: work,
      outExtension: { '.js': '.mjs' },
      external: EXTERNAL,
      logLevel: 'silent',
      legalComments: 'none',
    });
    if (force) rmSync(dir, { recursive: true, force: true });
    try {
      renameSync(work, dir);
    } catch {
      // another process put the same build in place first
      rmSync(work, { recursive: true, force: true });
    }
  } catch (e) {
    rmSync(work, { recursive: true, force: true });
    throw e;
  }
  // earlier builds go once they are a minute old (a command started just before may still be loading one)
  for (const n of readdirSync(OUT)) {
    const p = path.join(OUT, n);
    if (n !== stamp && Date.now() - statSync(p).mtimeMs > 60_000) rmSync(p, { recursive: true, force: true });
  }
  return path.join(dir, 'main.mjs');
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const entry = await buildCli(cliStamp(), { force: process.argv.includes('--force') });
  console.log(`spinyard command line built: ${path.relative(ROOT, entry)}`);
}
