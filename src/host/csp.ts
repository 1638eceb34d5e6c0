// The Content-Security-Policy of the renderer, one string for the Electron shell (response header of the
// app protocol) and the web build (a <meta http-equiv> in dist-web/index.html and the serve header).
// style-src allows inline styles because plotly.js sets them; nothing allows eval: 'wasm-unsafe-eval'
// allows compiling WebAssembly (the engine's table kernel, src/physics/kernels.wat) and nothing else.
// The renderer's index.html carries CONTENT_SECURITY_POLICY_META verbatim (test/host/csp.test.ts).
// frame-ancestors is ignored in a <meta> policy: serve it as a header where it matters.

import DIRECTIVES from './csp-directives.json';

// The directives are kept as JSON (csp-directives.json) so that scripts/serve-web.mjs, plain Node, sends
// the same header.
export const CSP_DIRECTIVES: ReadonlyArray<readonly [string, string]> = DIRECTIVES as [string, string][];

export const CONTENT_SECURITY_POLICY: string = CSP_DIRECTIVES.map(([k, v]) => `${k} ${v}`).join('; ');

/** The policy for a <meta http-equiv="Content-Security-Policy"> (without frame-ancestors, which a meta
 *  policy may not carry). */
export const CONTENT_SECURITY_POLICY_META: string = CSP_DIRECTIVES.filter(([k]) => k !== 'frame-ancestors')
  .map(([k, v]) => `${k} ${v}`)
  .join('; ');
