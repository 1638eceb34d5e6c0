// Bundles the Electron main process and preload to dist-electron/ as CommonJS, with the esbuild that
// node_modules already holds (it comes with tsx and vite). Electron itself stays external.
//   node scripts/build-electron.mjs [--watch]
import { build, context } from 'esbuild';
import { mkdirSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import path from 'node:path';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const out = path.join(root, 'dist-electron');
mkdirSync(out, { recursive: true });

const common = {
  bundle: true,
  platform: 'node',
  format: 'cjs',
  // Electron 45 runs Node 22 in main and preload.
  target: 'node22',
  external: ['electron'],
  sourcemap: true,
  logLevel: 'info',
  absWorkingDir: root,
};

const entries = [
  { ...common, entryPoints: ['electron/main/main.ts'], outfile: path.join(out, 'main.cjs') },
  // A sandboxed preload may require only 'electron' (and a few polyfills): everything else is bundled in.
  { ...common, entryPoints: ['electron/preload/preload.ts'], outfile: path.join(out, 'preload.cjs') },
];

if (process.argv.includes('--watch')) {
  for (const e of entries) await (await context(e)).watch();
} else {
  await Promise.all(entries.map((e) => build(e)));
}
