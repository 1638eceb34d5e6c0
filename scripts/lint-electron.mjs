// The Electron security linter over the shell (npm run lint:electron): @doyensec/electronegativity on
// electron/, offline, and its CSP evaluator (@doyensec/csp-evaluator) on the two policies the shell
// serves (the renderer's, src/host/csp.ts, and the print window's, electron/main/sheet-page.ts), which
// the linter cannot see itself (it finds only policies written as string literals in webRequest code).
//
// Offline: the linter fetches translations at start and, in AvailableSecurityFixesGlobalCheck, the list
// of Electron releases; its HTTP client ("got") is replaced here by one that answers 503 without
// touching the network, and that check is left out. Every finding must be in ACCEPTED below, with the
// reason docs/reliability.md ("Security") gives; a new finding, one that went away, or a file the linter
// could not parse fails the run (exit 1). Run with tsx (it imports the policies from TypeScript).

import { createRequire } from 'node:module';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { performance } from 'node:perf_hooks';
import { fileURLToPath } from 'node:url';
import { CONTENT_SECURITY_POLICY } from '../src/host/csp.ts';
import { SHEET_CSP } from '../electron/main/sheet-page.ts';

const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const require = createRequire(import.meta.url);

// Accepted findings: [check id, file (relative to electron/), how many, why]. docs/reliability.md has them.
const ACCEPTED = [
  ['CSP_GLOBAL_CHECK', 'N/A', 1, 'the policy is a response header of the app protocol (main.ts serveAppFile) and of the sheet session (sheet-page.ts), built from constants the linter does not read; both are evaluated below'],
  ['AUXCLICK_JS_CHECK', 'main/main.ts', 2, 'a middle-click goes through setWindowOpenHandler like any new window, and it denies them all (the allow-list EXTERNAL_LINKS is empty); will-navigate is prevented'],
  ['PRELOAD_JS_CHECK', 'main/main.ts', 1, 'reviewed: the preload exposes only the host contract through contextBridge (preload/bridge.ts: contract channels only, replies and events checked), main checks every message\'s sender and payload (ipc-validate.ts), and the window is sandboxed with context isolation'],
  ['OPEN_EXTERNAL_JS_CHECK', 'main/main.ts', 1, 'reviewed: shell.openExternal is reached only for a URL equal to an entry of EXTERNAL_LINKS (security.ts), which is empty'],
];
// Accepted findings of the CSP evaluator: [policy, directive, value, why].
const ACCEPTED_CSP = [
  ['renderer', 'script-src', "'self'", "the app origin serves only the files of dist-web (no JSONP, no user uploads, no Angular)"],
  ['renderer', 'script-src', "'wasm-unsafe-eval'", "a CSP3 keyword (Chromium 97+) the evaluator does not know yet; it allows compiling WebAssembly and nothing else"],
];

// No network: the linter's HTTP client answers 503 at once.
const Module = require('node:module');
const load = Module._load;
let refused = 0;
Module._load = function (request, ...rest) {
  if (request === 'got') {
    const got = () => {
      refused++;
      return Promise.resolve({ statusCode: 503, body: '', headers: {} });
    };
    got.extend = () => got;
    return got;
  }
  return load.call(this, request, ...rest);
};

const t0 = performance.now();
const run = require('@doyensec/electronegativity/dist/runner.js');
const csp = require('@doyensec/csp-evaluator');
const linterVersion = require('@doyensec/electronegativity/package.json').version;
const electronVersion = JSON.parse(readFileSync(path.join(ROOT, 'package.json'), 'utf8')).devDependencies.electron;

const input = path.join(ROOT, 'electron');
const result = await run({
  input,
  isRelative: true,
  electronVersionOverride: electronVersion,
  excludeFromScan: ['AvailableSecurityFixesGlobalCheck'],
  parserPlugins: [],
});

let failed = false;
console.log(`electronegativity ${linterVersion} on electron/ (Electron ${electronVersion}): ${result.atomicChecks} atomic and ${result.globalChecks} global checks; AvailableSecurityFixesGlobalCheck left out (it needs the network)`);
for (const e of result.errors) {
  console.log(`${e.tolerable ? 'warning' : 'ERROR'}: cannot parse ${path.relative(ROOT, e.file)}: ${e.message}`);
  if (!e.tolerable) failed = true;
}

const seen = new Map();
for (const issue of result.issues) {
  const key = `${issue.id} ${issue.file}`;
  seen.set(key, (seen.get(key) ?? 0) + 1);
  const ok = ACCEPTED.find(([id, file]) => id === issue.id && file === issue.file);
  const where = issue.file === 'N/A' ? '(global)' : `electron/${issue.file}:${issue.location.line}:${issue.location.column}`;
  console.log(`${ok ? 'accepted' : 'NEW     '} ${issue.id} ${where} ${issue.severity.name ?? ''}/${issue.confidence.name ?? ''}${issue.manualReview ? ' (review)' : ''}`);
  console.log(`         ${ok ? ok[3] : issue.description}`);
  if (!ok) failed = true;
}
for (const [id, file, count] of ACCEPTED) {
  const n = seen.get(`${id} ${file}`) ?? 0;
  if (n !== count) {
    console.log(`CHANGED  ${id} in ${file}: ${n} finding(s), ${count} accepted: update ACCEPTED here and docs/reliability.md`);
    failed = true;
  }
}

for (const [name, policy] of [['renderer', CONTENT_SECURITY_POLICY], ['sheet', SHEET_CSP]]) {
  const findings = new csp.CspEvaluator(new csp.CspParser(policy).csp, csp.Version.CSP3).evaluate();
  console.log(`CSP of the ${name}: ${findings.length} evaluator finding(s)`);
  for (const f of findings) {
    const ok = ACCEPTED_CSP.find(([p, d, v]) => p === name && d === f.directive && v === f.value);
    console.log(`${ok ? 'accepted' : 'NEW     '} ${f.directive} ${f.value ?? ''}: ${f.description}`);
    if (ok) console.log(`         ${ok[3]}`);
    else failed = true;
  }
  for (const [p, d, v] of ACCEPTED_CSP) {
    if (p === name && !findings.some((f) => f.directive === d && f.value === v)) {
      console.log(`CHANGED  the ${name} policy no longer gives ${d} ${v}: update ACCEPTED_CSP here and docs/reliability.md`);
      failed = true;
    }
  }
}

console.log(`${failed ? 'FAILED' : 'passed'} in ${((performance.now() - t0) / 1000).toFixed(1)} s; network requests refused: ${refused}`);
process.exit(failed ? 1 : 0);
