/**
 * Answers that need no physics (usage, command help, version), kept apart from the engine so the launcher
 * prints them without loading mathjs and the core.
 */
import { readFileSync } from 'node:fs';
import { COMMAND_HELP, USAGE } from './usage.ts';

export interface CliOutput {
  code: 0 | 1 | 2;
  stdout: string;
  stderr: string;
  /** A file to write after a successful command (`sheet -o`): runCli writes nothing, main.ts writes this (deliver.ts). */
  file?: OutputFile;
  /** Work that runs outside this thread (a scan over worker threads): main.ts awaits it for the output. */
  job?: () => Promise<CliOutput>;
}

/**
 * A file to write to `path`: the setup sheet as HTML or printed to PDF (`html`), or a command's text output as it
 * is (`format` "text": `html` holds the text, `what` says what it is, e.g. "scan (CSV)"); `input` is the document
 * it was made from.
 */
export interface OutputFile {
  path: string;
  format: 'pdf' | 'html' | 'text';
  html: string;
  input: string;
  what?: string;
  /** The command, for messages ("spinyard scan: …"); sheet when absent. */
  command?: string;
}

export const ok = (stdout: string): CliOutput => ({ code: 0, stdout, stderr: '' });
/** Invalid input: every message on stderr, nothing on stdout. */
export const bad = (...messages: string[]): CliOutput => ({ code: 2, stdout: '', stderr: messages.map((m) => `${m}\n`).join('') });

/** The version in package.json. */
export function version(): string {
  const pkg = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string };
  return pkg.version;
}

const isHelp = (a: string | undefined) => a === '--help' || a === '-h';

/** The output for no arguments, --help, --version, `help [COMMAND]` and `COMMAND --help`; undefined for the rest. */
export function quickAnswer(argv: readonly string[]): CliOutput | undefined {
  const [first, second] = argv;
  if (first === undefined) return bad(USAGE.trimEnd());
  if (argv.length === 1 && (isHelp(first) || first === 'help')) return ok(USAGE);
  if (argv.length === 1 && (first === '--version' || first === '-V')) return ok(`spinyard ${version()}\n`);
  if (argv.length === 2 && Object.hasOwn(COMMAND_HELP, first) && isHelp(second)) return ok(COMMAND_HELP[first]);
  if (argv.length === 2 && first === 'help' && Object.hasOwn(COMMAND_HELP, second)) return ok(COMMAND_HELP[second]);
  return undefined;
}
