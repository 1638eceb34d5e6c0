// The layer rule (DEVELOPERS.md, "Layers and the import rule"): imports point one way,
//   physics <- species <- beamline <- engine <- {sheet, app, cli};  host <- {app, preload, main}.
// The core (physics, species, beamline, engine) imports nothing from React, plotly, Electron, node:* or the DOM;
// src/sheet neither (it runs in the renderer and in the CLI). src/host is the browser host: no node:*.
// src/app reaches the engine through its index only, and the shell only through src/host.
// electron/main and electron/preload stand on src/host alone: no renderer, no engine, no React.
// Each ban is a regular expression over an import's source: no-restricted-imports checks `import` and
// `export … from`, and the same expression in no-restricted-syntax checks `import('…')`, which
// no-restricted-imports does not see. test/lint/layers.test.ts shows that every ban fails where it should.
import { builtinModules } from 'node:module';
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

const RULE = 'the layer rule (DEVELOPERS.md, Layers and the import rule)';
const ban = (regex, message) => ({ regex, message: `${message}: ${RULE}` });
// Folders of this repository anywhere in an import's path: '../engine/run.ts', '../../src/app/ui/App.tsx', 'electron'.
const folders = (names) => `(?:^|/)(?:${names.join('|')})(?:/|$)`;

const REACT = '^react(?:-dom)?(?:/|$)';
const PLOTLY = '^plotly\\.js';
const ELECTRON = folders(['electron']); // the package and the shell's folders
const NODE = `^(?:node:|(?:${builtinModules.filter((m) => !m.includes('/')).join('|')})(?:/|$))`;

// The core and the sheet run in Node, in a browser worker, in the renderer and in the CLI alike.
const portable = (who) => [
  ban(REACT, `${who} must run in Node, a worker and the CLI: no React here`),
  ban(PLOTLY, `${who} must run in Node, a worker and the CLI: no plotly here`),
  ban(ELECTRON, `${who} must run in Node, a worker and the CLI: no Electron here`),
  ban(NODE, `${who} must run in a browser too: no Node built-ins here`),
];
const domFree = (who) => [
  ...['window', 'document', 'navigator', 'location', 'localStorage', 'sessionStorage', 'indexedDB', 'self']
    .map((name) => ({ name, message: `${who} must run in Node and the CLI too: no DOM here (${name}): ${RULE}` })),
  ...['fetch', 'XMLHttpRequest', 'WebSocket']
    .map((name) => ({ name, message: `${who} reaches no network (${name}): ${RULE}` })),
];
const nodeFree = (who) => ['process', 'require', 'Buffer', '__dirname', '__filename', 'global', 'setImmediate']
  .map((name) => ({ name, message: `${who} must run in a browser too: no Node globals here (${name}): ${RULE}` }));
const CORE = 'the core (src/physics, species, beamline, engine)';

// folder: its path; above: the folders it must not import; bans: more import bans; globals: banned globals.
function layer(folder, above, bans = [], globals = []) {
  const all = [...bans];
  if (above.length) all.push(ban(folders(above), `${folder} may not import ${above.map((n) => `src/${n}`).join(', ')}: imports point one way`));
  const rules = {
    'no-restricted-imports': ['error', { patterns: all.map(({ regex, message }) => ({ regex, message })) }],
    'no-restricted-syntax': ['error', ...all.map(({ regex, message }) => ({
      selector: `ImportExpression[source.value=/${regex.replaceAll('/', '\\/')}/i]`,
      message,
    }))],
  };
  if (globals.length) rules['no-restricted-globals'] = ['error', ...globals];
  return { files: [`${folder}/**/*.ts`, `${folder}/**/*.tsx`], rules };
}

export default tseslint.config(
  { ignores: ['node_modules', 'dist', 'dist-web', 'dist-electron', 'dist-cli', 'release', 'test-results', 'bin', 'coverage'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  {
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_' }],
      '@typescript-eslint/no-explicit-any': 'off',
    },
  },
  {
    // build and serve scripts run in Node
    files: ['scripts/**/*.mjs', 'build/**/*.mjs', 'bin/**/*.js', '*.config.js'],
    languageOptions: {
      globals: Object.fromEntries(['process', 'console', 'URL', 'Buffer', 'setTimeout', 'clearTimeout', 'setInterval', 'clearInterval', '__dirname', 'fetch'].map((g) => [g, 'readonly'])),
    },
  },
  layer('src/physics', ['species', 'beamline', 'engine', 'sheet', 'app', 'cli', 'host'], portable(CORE), [...domFree(CORE), ...nodeFree(CORE)]),
  layer('src/species', ['beamline', 'engine', 'sheet', 'app', 'cli', 'host'], portable(CORE), [...domFree(CORE), ...nodeFree(CORE)]),
  layer('src/beamline', ['engine', 'sheet', 'app', 'cli', 'host'], portable(CORE), [...domFree(CORE), ...nodeFree(CORE)]),
  layer('src/engine', ['sheet', 'app', 'cli', 'host'], portable(CORE), [...domFree(CORE), ...nodeFree(CORE)]),
  // the setup sheet is built in the renderer and in the CLI
  layer('src/sheet', ['app', 'cli', 'host'], portable('src/sheet'), [...domFree('src/sheet'), ...nodeFree('src/sheet')]),
  // the browser host: the page's APIs, never Node's; the shell reads only its contract
  layer('src/host', ['physics', 'species', 'engine', 'sheet', 'app', 'cli'], [
    ban(NODE, 'src/host is the browser host: no Node built-ins here'),
    ban(ELECTRON, 'src/host is the browser host: no Electron here'),
    ban(REACT, 'src/host is shared with the Electron shell: no React here'),
    ban(PLOTLY, 'src/host is shared with the Electron shell: no plotly here'),
  ], nodeFree('src/host')),
  // the renderer: the engine through its index (src/engine/index.ts), the shell through src/host
  layer('src/app', ['cli'], [
    ban(NODE, 'src/app runs in the renderer (a browser page and its worker): no Node built-ins here'),
    ban(ELECTRON, 'src/app reaches the Electron shell only through the host contract (src/host): no Electron here'),
    ban('(?:^|/)engine/(?!index(?:\\.[cm]?[jt]s)?$)', 'src/app uses the engine through its index (src/engine/index.ts) only, not its internals'),
  ], nodeFree('src/app')),
  layer('src/cli', ['app', 'host']),
  // the shell: main and preload stand on the host contract (src/host), never on the renderer or the core
  layer('electron/main', ['app', 'cli', 'engine', 'sheet', 'beamline', 'species', 'physics'], [
    ban(REACT, 'electron/main is the shell: no React here (the renderer is src/app)'),
    ban(PLOTLY, 'electron/main is the shell: no plotly here (the renderer is src/app)'),
  ]),
  layer('electron/preload', ['app', 'cli', 'engine', 'sheet', 'beamline', 'species', 'physics'], [
    ban(REACT, 'electron/preload only bridges the host contract: no React here'),
    ban(PLOTLY, 'electron/preload only bridges the host contract: no plotly here'),
    ban(NODE, 'electron/preload runs sandboxed, where only electron can be required: no Node built-ins here'),
  ]),
);
