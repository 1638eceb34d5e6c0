// The writer killed at random points: a child `node` process runs the real atomic-save module (bundled
// once with esbuild) on an ~8 MB document and is killed with SIGKILL after a random delay, KILLS times.
// After each kill the document is exactly the previous or the new version, never missing or mixed, and
// its backup is a whole version; the next save (in this process) leaves no temporary file behind and
// keeps the document as it was after the kill as the backup. The seed is printed; set
// SPINYARD_KILL_SEED to replay a run. docs/reliability.md ("Saving") has the figures.

import { spawn } from 'node:child_process';
import * as fs from 'node:fs/promises';
import * as os from 'node:os';
import * as path from 'node:path';
import { fileURLToPath } from 'node:url';
import { build } from 'esbuild';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { atomicWriteFile, backupPath } from '../../../electron/main/atomic-save.ts';
import { killTestDocument, revisionOf } from './kill-document.ts';
import { prng as rng } from '../../prng.ts';

const KILLS = 200;
const BYTES = 8 * 1024 * 1024;
const ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../..');

let work: string;
let child: string;

beforeAll(async () => {
  work = await fs.mkdtemp(path.join(os.tmpdir(), 'spinyard-kill-'));
  child = path.join(work, 'writer.mjs');
  // node writer.mjs FILE REVISION BYTES: makes the text, says "ready", waits for a line on its standard
  // input, saves, says "done MS" (the save's duration). Started ahead, so that its start-up is not timed.
  const contents = `
    import { atomicWriteFile } from ${JSON.stringify(path.join(ROOT, 'electron/main/atomic-save.ts'))};
    import { killTestDocument } from ${JSON.stringify(path.join(ROOT, 'test/electron/main/kill-document.ts'))};
    const [file, revision, bytes] = process.argv.slice(2);
    const text = killTestDocument(Number(revision), Number(bytes));
    process.stdout.write('ready\\n');
    await new Promise((go) => process.stdin.once('data', go));
    const t0 = performance.now();
    await atomicWriteFile(file, text);
    process.stdout.write('done ' + (performance.now() - t0).toFixed(1) + '\\n');
    process.exit(0);
  `;
  await build({ stdin: { contents, resolveDir: ROOT, sourcefile: 'writer.ts', loader: 'ts' }, bundle: true, platform: 'node', format: 'esm', target: 'node20', outfile: child, logLevel: 'silent' });
});

afterAll(async () => {
  if (work) await fs.rm(work, { recursive: true, force: true });
});


interface Run {
  killed: boolean;
  saveMs: number | null;
}

interface Writer {
  /** Lets the writer save; kills it `delayMs` later (never when null). */
  go(delayMs: number | null): Promise<Run>;
}

/** Starts a writer of `revision` to `file`; resolves once it is ready (its text made, nothing touched). */
function startWriter(file: string, revision: number): Promise<Writer> {
  const p = spawn(process.execPath, [child, file, String(revision), String(BYTES)], { stdio: ['pipe', 'pipe', 'pipe'] });
  let out = '';
  let err = '';
  p.stderr.setEncoding('utf8').on('data', (d: string) => (err += d));
  const exited = new Promise<Run>((resolve, reject) => {
    p.once('error', reject);
    p.once('exit', (code, signal) => {
      const m = /done ([\d.]+)/.exec(out);
      if (signal === 'SIGKILL') resolve({ killed: true, saveMs: m ? Number(m[1]) : null });
      else if (code === 0 && m) resolve({ killed: false, saveMs: Number(m[1]) });
      else reject(new Error(`writer exited with ${code ?? signal}: ${err}`));
    });
  });
  return new Promise((resolve, reject) => {
    exited.catch(reject);
    p.stdout.setEncoding('utf8').on('data', (d: string) => {
      const wasReady = out.includes('ready\n');
      out += d;
      if (!wasReady && out.includes('ready\n')) {
        resolve({
          go: (delayMs) => {
            p.stdin.write('go\n');
            const timer = delayMs === null ? undefined : setTimeout(() => p.kill('SIGKILL'), delayMs);
            return exited.finally(() => clearTimeout(timer));
          },
        });
      }
    });
  });
}

const isTemp = (name: string) => name.endsWith('.tmp');

describe('atomicWriteFile killed at random points', () => {
  it(`leaves the old or the new document, a whole backup and, after the next save, no temporary file (${KILLS} kills)`, async () => {
    const seed = Number(process.env.SPINYARD_KILL_SEED ?? Math.floor(Math.random() * 2 ** 31));
    const random = rng(seed);
    const dir = path.join(work, 'lab');
    await fs.mkdir(dir);
    const file = path.join(dir, 'bench-k.spinyard');
    const texts = new Map<number, Buffer>();
    const bytesOf = (r: number) => {
      if (!texts.has(r)) texts.set(r, Buffer.from(killTestDocument(r, BYTES)));
      for (const k of texts.keys()) if (k < r - 4) texts.delete(k);
      return texts.get(r)!;
    };
    /** The revision of a whole kill-test document at `f`, or a description of what is there instead. */
    const wholeRevision = async (f: string): Promise<number | string> => {
      let t: Buffer;
      try {
        t = await fs.readFile(f);
      } catch (e) {
        return `unreadable (${(e as { code?: string }).code})`;
      }
      const r = revisionOf(t.subarray(0, 200).toString('latin1'));
      if (r === null) return `no revision in ${t.length} bytes`;
      return t.equals(bytesOf(r)) ? r : `revision ${r} but not whole (${t.length} of ${bytesOf(r).length} bytes)`;
    };

    // Revisions: 0 written here, 1-3 by uninterrupted writers (calibration), then per kill 2k+4 by a
    // writer that is killed and 2k+5 by the next save here.
    await atomicWriteFile(file, bytesOf(0));
    const calib: number[] = [];
    for (let r = 1; r <= 3; r++) calib.push((await (await startWriter(file, r)).go(null)).saveMs!);
    const saveMs = [...calib].sort((x, y) => x - y)[1];
    const maxDelay = 1.25 * saveMs; // about one kill in five lands after the save has finished

    const t0 = performance.now();
    const tally = { old: 0, new: 0, finished: 0, tempsLeft: 0, killsLeavingTemps: 0, maxTempsLeft: 0, tempBytes: 0, backupOld: 0, backupPrevious: 0 };
    let revision = 3; // the document on disk
    let backupBefore: number | string = 2;
    let next = startWriter(file, 4);
    for (let k = 0; k < KILLS; k++) {
      const before = revision;
      const attempt = before + 1;
      const writer = await next;
      const run = await writer.go(random() * maxDelay);
      if (k + 1 < KILLS) next = startWriter(file, attempt + 2); // starts up while this kill is checked
      if (!run.killed) tally.finished++;

      const now = await wholeRevision(file);
      expect([before, attempt], `kill ${k} (seed ${seed}): the document`).toContain(now);
      if (now === before) tally.old++;
      else tally.new++;
      const backup = await wholeRevision(backupPath(file));
      expect([backupBefore, before], `kill ${k} (seed ${seed}): the backup`).toContain(backup);
      if (backup === before) tally.backupOld++;
      else tally.backupPrevious++;

      const temps = (await fs.readdir(dir)).filter(isTemp);
      tally.tempsLeft += temps.length;
      if (temps.length) tally.killsLeavingTemps++;
      tally.maxTempsLeft = Math.max(tally.maxTempsLeft, temps.length);
      for (const t of temps) tally.tempBytes += (await fs.stat(path.join(dir, t))).size;

      // The next save: the document as it was after the kill becomes the backup, nothing else is left.
      revision = attempt + 1;
      await atomicWriteFile(file, bytesOf(revision));
      expect(await wholeRevision(file)).toBe(revision);
      expect(await wholeRevision(backupPath(file)), `kill ${k} (seed ${seed}): the backup after the next save`).toBe(now);
      expect((await fs.readdir(dir)).sort(), `kill ${k} (seed ${seed}): files after the next save`).toEqual(['bench-k.spinyard', 'bench-k.spinyard.bak']);
      backupBefore = now;
    }
    const seconds = (performance.now() - t0) / 1000;
    console.log(
      `kill test: seed ${seed}, ${KILLS} kills of a ${(BYTES / 2 ** 20).toFixed(0)} MiB save (uninterrupted save ${saveMs.toFixed(0)} ms, ` +
        `kill delays 0–${maxDelay.toFixed(0)} ms after the writer is told to save) in ${seconds.toFixed(1)} s: document old ${tally.old}, new ${tally.new} ` +
        `(writer finished before the kill ${tally.finished}); backup = document before the kill ${tally.backupOld}, the backup before that ${tally.backupPrevious}; ` +
        `temporary files left by a kill: ${tally.tempsLeft} in ${tally.killsLeavingTemps} kills (at most ${tally.maxTempsLeft} at once, ` +
        `${(tally.tempBytes / 2 ** 20).toFixed(0)} MiB in all), each removed by the next save`,
    );
    // The kills spread over the save: some before the rename, some after it.
    expect(tally.old).toBeGreaterThan(0);
    expect(tally.new).toBeGreaterThan(0);
    expect(tally.killsLeavingTemps).toBeGreaterThan(0);
  }, 300_000);
});
