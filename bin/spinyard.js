#!/usr/bin/env node
// Launcher of the command line: registers tsx's loader (a dependency) and runs src/cli/main.ts from this
// checkout, resolved relative to this file, so no build step is needed and any working directory works.
import { register } from 'tsx/esm/api';

register();
const { cliMain } = await import(new URL('../src/cli/main.ts', import.meta.url).href);
process.exitCode = await cliMain(process.argv.slice(2));
