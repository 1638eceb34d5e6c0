// The layer rule (DEVELOPERS.md, "Layers and the import rule"), checked where it is enforced:
// eslint.config.js lints small snippets placed at paths in each folder (the files need not exist), and
// tsconfig.core.json type-checks a snippet without the DOM library. Every forbidden import or global must
// give an error, and the allowed neighbour of each must not, so that no ban is vacuous or too wide.
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ESLint } from 'eslint';
import ts from 'typescript';
import { beforeAll, describe, expect, it } from 'vitest';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../..');
const LAYER_RULES = new Set(['no-restricted-imports', 'no-restricted-syntax', 'no-restricted-globals']);

let eslint: ESLint;
beforeAll(() => {
  eslint = new ESLint({ cwd: root });
});

/** The layer-rule errors ESLint gives for `code` placed at `file` (relative to the repository). */
async function layerErrors(file: string, code: string) {
  const [result] = await eslint.lintText(code, { filePath: path.join(root, file) });
  const fatal = result.messages.filter((m) => m.fatal);
  expect(fatal, `${file} must parse and must not be ignored`).toEqual([]);
  expect(result.messages.some((m) => m.message.startsWith('File ignored')), `${file} is ignored`).toBe(false);
  return result.messages.filter((m) => m.ruleId !== null && LAYER_RULES.has(m.ruleId));
}

type Case = [file: string, code: string];

// [where, what]: each must give exactly one error of the named rule, and its message must name the rule.
const forbidden: [string, string, 'no-restricted-imports' | 'no-restricted-syntax' | 'no-restricted-globals'][] = [
  // src/app: the renderer
  ['src/app/x.ts', "import fs from 'node:fs'; export const a = fs;", 'no-restricted-imports'],
  ['src/app/x.ts', "import { readFile } from 'fs/promises'; export const a = readFile;", 'no-restricted-imports'],
  ['src/app/x.ts', "import { EventEmitter } from 'events'; export const a = EventEmitter;", 'no-restricted-imports'],
  ['src/app/x.ts', "import { app } from 'electron'; export const a = app;", 'no-restricted-imports'],
  ['src/app/x.ts', "import '../../electron/preload/bridge.ts';", 'no-restricted-imports'],
  ['src/app/x.ts', "import { runLine } from '../engine/run.ts'; export const a = runLine;", 'no-restricted-imports'],
  ['src/app/x.ts', "import type { RunResult } from '../engine/result.ts'; export type A = RunResult;", 'no-restricted-imports'],
  ['src/app/x.ts', "export { runLine } from '../engine/run.ts';", 'no-restricted-imports'],
  ['src/app/ui/x.tsx', "import { workArray } from '../../engine/spectral.ts'; export const a = workArray;", 'no-restricted-imports'],
  ['src/app/x.ts', "export const a = () => import('../engine/run.ts');", 'no-restricted-syntax'],
  ['src/app/x.ts', "export const a = () => import('node:fs');", 'no-restricted-syntax'],
  ['src/app/x.ts', "import { main } from '../cli/cli.ts'; export const a = main;", 'no-restricted-imports'],
  ['src/app/x.ts', 'export const a = process.env;', 'no-restricted-globals'],
  ['src/app/x.ts', "export const a = require('node:fs');", 'no-restricted-globals'],
  // electron/main: the shell stands on src/host only
  ['electron/main/x.ts', "import '../../src/app/ui/App.tsx';", 'no-restricted-imports'],
  ['electron/main/x.ts', "import { runLine } from '../../src/engine/index.ts'; export const a = runLine;", 'no-restricted-imports'],
  ['electron/main/x.ts', "import { buildSheet } from '../../src/sheet/index.ts'; export const a = buildSheet;", 'no-restricted-imports'],
  ['electron/main/x.ts', "import { parseDocument } from '../../src/beamline/index.ts'; export const a = parseDocument;", 'no-restricted-imports'],
  ['electron/main/x.ts', "import { createElement } from 'react'; export const a = createElement;", 'no-restricted-imports'],
  ['electron/main/x.ts', "import { renderToString } from 'react-dom/server'; export const a = renderToString;", 'no-restricted-imports'],
  ['electron/main/x.ts', "export const a = () => import('../../src/engine/index.ts');", 'no-restricted-syntax'],
  // electron/preload: sandboxed, bridges the host contract
  ['electron/preload/x.ts', "import fs from 'node:fs'; export const a = fs;", 'no-restricted-imports'],
  ['electron/preload/x.ts', "import '../../src/app/main.tsx';", 'no-restricted-imports'],
  ['electron/preload/x.ts', "import { runLine } from '../../src/engine/index.ts'; export const a = runLine;", 'no-restricted-imports'],
  ['electron/preload/x.ts', "import { useState } from 'react'; export const a = useState;", 'no-restricted-imports'],
  // src/sheet: renderer and CLI alike
  ['src/sheet/x.ts', 'export const a = document.title;', 'no-restricted-globals'],
  ['src/sheet/x.ts', 'export const a = window.innerWidth;', 'no-restricted-globals'],
  ['src/sheet/x.ts', "export const a = fetch('samples/index.json');", 'no-restricted-globals'],
  ['src/sheet/x.ts', 'export const a = process.platform;', 'no-restricted-globals'],
  ['src/sheet/x.ts', "import { createHash } from 'node:crypto'; export const a = createHash;", 'no-restricted-imports'],
  ['src/sheet/x.ts', "import { createHash } from 'crypto'; export const a = createHash;", 'no-restricted-imports'],
  ['src/sheet/x.ts', "import { createElement } from 'react'; export const a = createElement;", 'no-restricted-imports'],
  ['src/sheet/x.ts', "import { shell } from 'electron'; export const a = shell;", 'no-restricted-imports'],
  ['src/sheet/x.ts', "import { formatValue } from '../app/format.ts'; export const a = formatValue;", 'no-restricted-imports'],
  ['src/sheet/x.ts', "export const a = () => import('node:fs');", 'no-restricted-syntax'],
  // src/host: the browser host
  ['src/host/x.ts', "import fs from 'node:fs'; export const a = fs;", 'no-restricted-imports'],
  ['src/host/x.ts', "import path from 'path'; export const a = path;", 'no-restricted-imports'],
  ['src/host/x.ts', "import { ipcRenderer } from 'electron'; export const a = ipcRenderer;", 'no-restricted-imports'],
  ['src/host/x.ts', "import { useState } from 'react'; export const a = useState;", 'no-restricted-imports'],
  ['src/host/x.ts', "import { runLine } from '../engine/index.ts'; export const a = runLine;", 'no-restricted-imports'],
  ['src/host/x.ts', 'export const a = process.platform;', 'no-restricted-globals'],
  // the core, as before
  ['src/engine/x.ts', "import { Worker } from 'node:worker_threads'; export const a = Worker;", 'no-restricted-imports'],
  ['src/engine/x.ts', 'export const a = document.body;', 'no-restricted-globals'],
  ['src/engine/x.ts', "import { buildSheet } from '../sheet/index.ts'; export const a = buildSheet;", 'no-restricted-imports'],
  ['src/physics/x.ts', "import { lookupSpecies } from '../species/index.ts'; export const a = lookupSpecies;", 'no-restricted-imports'],
  ['src/beamline/x.ts', "export const a = () => import('../engine/index.ts');", 'no-restricted-syntax'],
  ['src/species/x.ts', "import Plotly from 'plotly.js-dist-min'; export const a = Plotly;", 'no-restricted-imports'],
  // src/cli
  ['src/cli/x.ts', "import { formatValue } from '../app/format.ts'; export const a = formatValue;", 'no-restricted-imports'],
];

// Each allowed import is the neighbour of a forbidden one above.
const allowed: Case[] = [
  ['src/cli/x.ts', "import fs from 'node:fs'; export const a = fs;"],
  ['src/cli/x.ts', "import { runLine } from '../engine/index.ts'; export const a = runLine;"],
  ['src/cli/x.ts', "export const a = () => import('playwright-core');"],
  ['electron/main/x.ts', "import { app } from 'electron'; export const a = app;"],
  ['electron/main/x.ts', "import { readFile } from 'node:fs/promises'; export const a = readFile;"],
  ['electron/main/x.ts', "import { isSaveRequest } from '../../src/host/contract.ts'; export const a = isSaveRequest;"],
  ['electron/main/x.ts', "import mime from '../../src/host/mime-types.json'; export const a = mime;"],
  ['electron/main/x.ts', 'export const a = process.platform;'],
  ['electron/preload/x.ts', "import { contextBridge } from 'electron'; export const a = contextBridge;"],
  ['electron/preload/x.ts', "import { HOST_COMMANDS } from '../../src/host/contract.ts'; export const a = HOST_COMMANDS;"],
  ['electron/preload/x.ts', 'export const a = process.platform;'],
  ['src/app/x.ts', "import { runLine } from '../engine/index.ts'; export const a = runLine;"],
  ['src/app/x.ts', "import type { RunResult } from '../engine/index.ts'; export type A = RunResult;"],
  ['src/app/ui/x.tsx', "import { runLine } from '../../engine/index.ts'; export const a = runLine;"],
  ['src/app/x.ts', "import { post } from './engine-protocol.ts'; export const a = post;"],
  ['src/app/x.ts', "import { useState } from 'react'; export const a = useState;"],
  ['src/app/x.ts', "export const a = () => import('plotly.js-dist-min');"],
  ['src/app/x.ts', "import { getHost } from '../host/index.ts'; export const a = getHost;"],
  ['src/app/x.ts', "import { buildSheet } from '../sheet/index.ts'; export const a = buildSheet;"],
  ['src/app/x.ts', 'export const a = document.title;'],
  ['src/sheet/x.ts', "import { spinLabel } from '../physics/spin.ts'; export const a = spinLabel;"],
  ['src/sheet/x.ts', "import type { RunResult } from '../engine/result.ts'; export type A = RunResult;"],
  ['src/sheet/x.ts', "export const a = 'the document and the window of the oven';"],
  ['src/host/x.ts', 'export const a = document.title;'],
  ['src/host/x.ts', "import { RECENT_LIMIT } from './contract.ts'; export const a = RECENT_LIMIT;"],
  ['src/physics/x.ts', "import { HBAR } from './constants.ts'; export const a = HBAR;"],
  ['src/beamline/x.ts', "import { create, all } from 'mathjs'; export const a = create(all);"],
  ['src/beamline/x.ts', "import { lookupSpecies } from '../species/index.ts'; export const a = lookupSpecies;"],
];

describe('eslint.config.js: the layer rule', () => {
  it.each(forbidden)('%s: %s gives %s', async (file, code, rule) => {
    const errors = await layerErrors(file, code);
    expect(errors.map((m) => m.ruleId)).toEqual([rule]);
    expect(errors[0].severity).toBe(2);
    expect(errors[0].message).toContain('DEVELOPERS.md, Layers and the import rule');
  });

  it.each(allowed)('%s: %s is allowed', async (file, code) => {
    expect(await layerErrors(file, code)).toEqual([]);
  });
});

describe('tsconfig.core.json: the core and the sheet type-check without the DOM', () => {
  const configPath = path.join(root, 'tsconfig.core.json');
  const parsed = ts.parseJsonConfigFileContent(ts.readConfigFile(configPath, ts.sys.readFile).config, ts.sys, root, undefined, configPath);

  it('covers the core and the sheet', () => {
    for (const dir of ['physics', 'species', 'beamline', 'engine', 'sheet']) {
      expect(parsed.fileNames.some((f) => f.startsWith(path.join(root, 'src', dir) + '/')), dir).toBe(true);
    }
    expect(parsed.fileNames.some((f) => /\/src\/(app|host|cli)\//.test(f))).toBe(false);
  });

  /** The diagnostics of one snippet compiled as src/engine/x.ts with the core's options. */
  function diagnose(code: string): string[] {
    const file = path.join(root, 'src/engine/x.ts');
    const host = ts.createCompilerHost(parsed.options);
    const getSourceFile = host.getSourceFile;
    host.getSourceFile = (name, lang, ...rest) =>
      name === file ? ts.createSourceFile(name, code, lang, true) : getSourceFile.call(host, name, lang, ...rest);
    const fileExists = host.fileExists;
    host.fileExists = (name) => name === file || fileExists.call(host, name);
    const program = ts.createProgram([file], parsed.options, host);
    return ts.getPreEmitDiagnostics(program).map((d) => ts.flattenDiagnosticMessageText(d.messageText, '\n'));
  }

  it.each([
    ['a DOM global', 'export const a = document.title;'],
    ['a DOM type', 'export let a: HTMLElement | undefined;'],
    ['an event type', 'export const f = (e: KeyboardEvent) => e;'],
    ['a Node global', 'export const a = process.platform;'],
  ])('rejects %s', (_what, code) => {
    expect(diagnose(code).length).toBeGreaterThan(0);
  });

  it('accepts plain ES2022', () => {
    expect(diagnose('export const a = new Float64Array(4).map((x, i) => Math.hypot(x, i));')).toEqual([]);
  });
});
