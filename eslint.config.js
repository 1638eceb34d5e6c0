// Layer rule of design.md: physics <- species <- beamline <- engine <- {sheet, app, cli}; host <- {app, preload, main}.
// The core (physics, species, beamline, engine) imports nothing from react, plotly, electron, node:* or the DOM.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

const coreBan = [
  { group: ['react', 'react-dom', 'react/*', 'react-dom/*'], message: 'the core must run in Node, a worker and the CLI: no React here' },
  { group: ['plotly.js*'], message: 'the core must run in Node, a worker and the CLI: no plotly here' },
  { group: ['electron', 'electron/*'], message: 'the core must run in Node, a worker and the CLI: no Electron here' },
  { group: ['node:*', 'fs', 'path', 'os', 'child_process', 'worker_threads', 'url'], message: 'the core must run in a browser worker too: no Node built-ins here' },
];
const up = (names, why) => names.map((n) => ({ group: [`**/${n}/**`, `**/${n}`], message: why }));

function layer(dir, forbidden, extra = []) {
  return {
    files: [`src/${dir}/**/*.ts`, `src/${dir}/**/*.tsx`],
    rules: {
      'no-restricted-imports': ['error', { patterns: [...extra, ...up(forbidden, `src/${dir} sits below these layers (design.md, Architecture): imports point one way`)] }],
    },
  };
}

export default tseslint.config(
  { ignores: ['node_modules', 'dist', 'dist-web', 'dist-electron', 'release', 'test-results', 'bin', 'coverage'] },
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
  layer('physics', ['species', 'beamline', 'engine', 'sheet', 'app', 'cli', 'host'], coreBan),
  layer('species', ['beamline', 'engine', 'sheet', 'app', 'cli', 'host'], coreBan),
  layer('beamline', ['engine', 'sheet', 'app', 'cli', 'host'], coreBan),
  layer('engine', ['sheet', 'app', 'cli', 'host'], coreBan),
  layer('sheet', ['app', 'cli', 'host']),
  layer('host', ['physics', 'species', 'engine', 'sheet', 'app', 'cli']),
  layer('cli', ['app', 'host']),
  {
    files: ['src/physics/**/*.ts', 'src/species/**/*.ts', 'src/beamline/**/*.ts', 'src/engine/**/*.ts'],
    languageOptions: { globals: {} },
    rules: {
      'no-restricted-globals': ['error', 'window', 'document', 'navigator', 'localStorage', 'process', 'require', 'Buffer'],
    },
  },
);
