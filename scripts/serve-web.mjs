// Static server for the built renderer (dist-web) on 127.0.0.1 only. Port: $PORT, else 5178, else the
// next free one (PORT=0 takes any free port). Prints the URL on one line. Web Workers need http(s).
// Every response carries the renderer's Content-Security-Policy (src/host/csp.ts, whose directives are
// in src/host/csp-directives.json), and a request is answered only when its Host header is
// 127.0.0.1:PORT or localhost:PORT: another site whose name resolves to 127.0.0.1 (DNS rebinding) gets
// 421 and nothing of the app (test/host/serve-web.test.ts).
import { createServer } from 'node:http';
import { readFile, stat } from 'node:fs/promises';
import { readFileSync } from 'node:fs';
import { join, normalize, extname, dirname, sep } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..', process.env.SPINYARD_WEB_DIR ?? 'dist-web');
// the Content-Type table shared with the Electron app protocol (electron/main/security.ts)
const TYPES = JSON.parse(readFileSync(join(dirname(fileURLToPath(import.meta.url)), '..', 'src', 'host', 'mime-types.json'), 'utf8'));
// the renderer's policy, as src/host/csp.ts builds CONTENT_SECURITY_POLICY from the same directives
const CSP = JSON.parse(readFileSync(join(dirname(fileURLToPath(import.meta.url)), '..', 'src', 'host', 'csp-directives.json'), 'utf8'))
  .map(([k, v]) => `${k} ${v}`)
  .join('; ');
const COMMON = { 'Content-Security-Policy': CSP, 'X-Content-Type-Options': 'nosniff' };
const TEXT = { ...COMMON, 'Content-Type': 'text/plain; charset=utf-8' };

/** True when the request names this server: Host 127.0.0.1:PORT or localhost:PORT, nothing else. */
function addressedHere(req, port) {
  const host = (req.headers.host ?? '').toLowerCase();
  return host === `127.0.0.1:${port}` || host === `localhost:${port}`;
}

async function handle(req, res, port) {
  if (!addressedHere(req, port)) {
    res.writeHead(421, TEXT).end(`misdirected request: this server answers 127.0.0.1:${port} and localhost:${port} only\n`);
    return;
  }
  if (req.method !== 'GET' && req.method !== 'HEAD') {
    res.writeHead(405, { ...COMMON, Allow: 'GET, HEAD' }).end();
    return;
  }
  let path;
  try {
    path = decodeURIComponent(new URL(req.url ?? '/', 'http://127.0.0.1').pathname);
  } catch {
    res.writeHead(400, TEXT).end('bad request');
    return;
  }
  if (path.endsWith('/')) path += 'index.html';
  const file = normalize(join(root, path));
  if (file !== root && !file.startsWith(root + sep)) {
    res.writeHead(403, TEXT).end('forbidden');
    return;
  }
  try {
    const s = await stat(file);
    if (!s.isFile()) throw new Error('not a file');
    const body = await readFile(file);
    res.writeHead(200, {
      ...COMMON,
      'Content-Type': TYPES[extname(file).toLowerCase()] ?? 'application/octet-stream',
      'Content-Length': body.length,
      'Cache-Control': 'no-cache',
    });
    res.end(req.method === 'HEAD' ? undefined : body);
  } catch {
    res.writeHead(404, TEXT).end(`not found: ${path}`);
  }
}

function listen(port, tries) {
  const server = createServer((req, res) => {
    handle(req, res, server.address().port).catch(() => res.writeHead(500, TEXT).end());
  });
  server.once('error', (e) => {
    if (e.code === 'EADDRINUSE' && tries > 0 && port !== 0) listen(port + 1, tries - 1);
    else {
      console.error(`serve-web: cannot listen on 127.0.0.1:${port}: ${e.message}`);
      process.exit(1);
    }
  });
  server.listen(port, '127.0.0.1', () => {
    const addr = server.address();
    console.log(`Spinyard web: http://127.0.0.1:${addr.port}/`);
  });
}

try {
  await stat(join(root, 'index.html'));
} catch {
  console.error(`serve-web: ${root}/index.html is missing: run "npm run build:web" first`);
  process.exit(1);
}
const env = process.env.PORT;
listen(env !== undefined && env !== '' ? Number(env) : 5178, env ? 0 : 50);
