#!/usr/bin/env node
// Launcher of the command line: runs the plain-JavaScript build of src/cli (scripts/cli-build.mjs), building
// it first when it is missing or older than a source (esbuild, well under a second). Where no build can be
// made, it falls back to transpiling the sources with tsx (slow, the same results).
import { cliEntry, cliStamp } from '../scripts/cli-build.mjs';
import { existsSync } from 'node:fs';
import { pathToFileURL } from 'node:url';

const stamp = cliStamp();
let entry = cliEntry(stamp);
if (!existsSync(entry)) {
  try {
    entry = await (await import('../scripts/cli-build.mjs')).buildCli(stamp);
  } catch {
    entry = undefined;
  }
}
let cliMain;
if (entry) {
  ({ cliMain } = await import(pathToFileURL(entry).href));
} else {
  const { register } = await import('tsx/esm/api');
  register();
  ({ cliMain } = await import(new URL('../src/cli/main.ts', import.meta.url).href));
}
process.exitCode = await cliMain(process.argv.slice(2));
