/**
 * Entry of the command line (bin/spinyard.js imports it; `npx tsx src/cli/main.ts …` runs it too): writes
 * the output of runCli (cli.ts) and returns the exit code. Help and version are answered before the
 * engine is loaded.
 */
import { pathToFileURL } from 'node:url';
import { type CliOutput, quickAnswer } from './quick.ts';

function write(stream: NodeJS.WriteStream, s: string): Promise<void> {
  return new Promise((resolve) => (s ? stream.write(s, () => resolve()) : resolve()));
}

/** Run the command line with `argv` (without "node" and the script) and write its output; returns the exit code. */
export async function cliMain(argv: readonly string[]): Promise<number> {
  // A reader that stops early (`spinyard species | head -1`) is not an error of ours.
  process.stdout.on('error', (err: NodeJS.ErrnoException) => {
    if (err.code === 'EPIPE') process.exit(0);
    throw err;
  });
  let out: CliOutput | undefined = quickAnswer(argv);
  if (!out) {
    if (process.stderr.isTTY) {
      const { setProgressSink, terminalSink } = await import('./progress.ts');
      setProgressSink(terminalSink(process.stderr));
    }
    const { runCli } = await import('./cli.ts');
    out = runCli(argv);
    if (out.job) out = await out.job();
    if (out.file) out = await (await import('./deliver.ts')).deliver(out);
  }
  await write(process.stdout, out.stdout);
  await write(process.stderr, out.stderr);
  return out.code;
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  void cliMain(process.argv.slice(2)).then((code) => {
    process.exitCode = code;
  });
}
