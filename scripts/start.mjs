// `npm start`: the desktop app when Electron's binary is installed, else the browser host.
// The binary's presence is read from node_modules/electron (path.txt and dist/) rather than by
// require('electron'), because that require starts a download when the binary is missing.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const npm = process.platform === 'win32' ? 'npm.cmd' : 'npm';

/** The Electron executable, or null when it is not installed. */
function electronBinary() {
  const pkg = path.join(root, 'node_modules', 'electron');
  const pathFile = path.join(pkg, 'path.txt');
  const rel = existsSync(pathFile) ? readFileSync(pathFile, 'utf8').trim() : '';
  if (process.env.ELECTRON_OVERRIDE_DIST_PATH) {
    const p = path.join(process.env.ELECTRON_OVERRIDE_DIST_PATH, rel || 'electron');
    return existsSync(p) ? p : null;
  }
  if (!rel) return null;
  const p = path.join(pkg, 'dist', rel);
  return existsSync(p) ? p : null;
}

function runOrExit(cmd, args) {
  const r = spawnSync(cmd, args, { cwd: root, stdio: 'inherit', shell: process.platform === 'win32' });
  if (r.status !== 0) process.exit(r.status ?? 1);
}

/** Runs a long-lived child, passing Ctrl+C on, and exits with its code. */
function handOver(cmd, args) {
  const child = spawn(cmd, args, { cwd: root, stdio: 'inherit', shell: process.platform === 'win32' });
  for (const sig of ['SIGINT', 'SIGTERM']) process.on(sig, () => child.kill(sig));
  child.on('exit', (code, signal) => process.exit(code ?? (signal ? 1 : 0)));
}

const electron = electronBinary();
if (electron) {
  runOrExit(npm, ['run', 'build:web']);
  runOrExit(npm, ['run', 'build:electron']);
  handOver(electron, ['.', ...process.argv.slice(2)]);
} else {
  console.log('The Electron binary is missing (node_modules/electron/dist): starting the browser host instead (npm run web).');
  handOver(npm, ['run', 'web']);
}
