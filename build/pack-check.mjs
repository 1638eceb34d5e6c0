// `npm run pack:check`: runs electron-builder --dir against electron-builder.yml with a stub Electron
// distribution (a folder holding a fake `electron` executable, made in a temp dir), because Electron's
// binary cannot be downloaded here. It checks the configuration and the app's file set, not Electron:
// the packaged folder it makes does not run.
import { spawnSync } from 'node:child_process';
import { chmodSync, existsSync, mkdtempSync, rmSync, writeFileSync, mkdirSync } from 'node:fs';
import { createRequire } from 'node:module';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const require = createRequire(import.meta.url);
const run = (cmd, args, opts = {}) => {
  const r = spawnSync(cmd, args, { cwd: root, stdio: 'inherit', ...opts });
  if (r.status !== 0) {
    console.error(`pack:check: ${[cmd, ...args].join(' ')} failed (exit ${r.status ?? r.signal})`);
    process.exit(1);
  }
};

run(process.execPath, ['scripts/build-electron.mjs']);
if (!existsSync(path.join(root, 'dist-web', 'index.html'))) {
  console.warn('pack:check: dist-web/index.html is missing (run `npm run build:web` first); packing without the renderer');
}

const tmp = mkdtempSync(path.join(os.tmpdir(), 'spinyard-pack-'));
const dist = path.join(tmp, 'electron-dist');
mkdirSync(path.join(dist, 'resources'), { recursive: true });
writeFileSync(path.join(dist, 'electron'), '#!/bin/sh\necho "stub Electron executable made by pack:check; it cannot run the app" >&2\nexit 1\n');
chmodSync(path.join(dist, 'electron'), 0o755);
writeFileSync(path.join(dist, 'version'), require('electron/package.json').version);
writeFileSync(path.join(dist, 'LICENSE'), 'stub\n');
const out = path.join(tmp, 'release');

try {
  run(process.execPath, [
    require.resolve('electron-builder/cli.js'),
    '--dir',
    '--linux',
    '--x64',
    '--publish',
    'never',
    '--config',
    'electron-builder.yml',
    `--config.electronDist=${dist}`,
    `--config.directories.output=${out}`,
  ], { env: { ...process.env, ELECTRON_BUILDER_OFFLINE: 'true', CSC_IDENTITY_AUTO_DISCOVERY: 'false' } });

  const unpacked = path.join(out, 'linux-unpacked');
  const exe = path.join(unpacked, 'spinyard');
  const asarFile = path.join(unpacked, 'resources', 'app.asar');
  const problems = [];
  if (!existsSync(exe)) problems.push(`no executable ${exe}`);
  if (!existsSync(asarFile)) problems.push(`no ${asarFile}`);
  let files = [];
  if (existsSync(asarFile)) {
    const asar = require('@electron/asar');
    files = asar.listPackage(asarFile, { isPack: false }).map((f) => f.replace(/\\/g, '/'));
    for (const want of ['/package.json', '/dist-electron/main.cjs', '/dist-electron/preload.cjs']) {
      if (!files.includes(want)) problems.push(`app.asar lacks ${want}`);
    }
    if (files.some((f) => f.startsWith('/node_modules/'))) problems.push('app.asar holds node_modules (the bundles should be self-contained)');
    if (files.some((f) => f.endsWith('.map'))) problems.push('app.asar holds source maps');
  }
  if (problems.length > 0) {
    console.error(`pack:check: FAILED\n  ${problems.join('\n  ')}`);
    process.exit(1);
  }
  const count = (p) => files.filter((f) => f.startsWith(p)).length;
  console.log(
    `pack:check: OK: linux-unpacked/spinyard with app.asar of ${files.length} entries ` +
      `(dist-electron ${count('/dist-electron/')}, dist-web ${count('/dist-web/')}, samples ${count('/samples/')})`,
  );
} finally {
  if (!process.env.SPINYARD_KEEP_PACK) rmSync(tmp, { recursive: true, force: true });
}
