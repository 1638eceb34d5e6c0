/**
 * The command line `spinyard`: run, sheet, validate, levels, species, help. `runCli(argv)` is a function of its
 * arguments (and the files they name, read only) returning exit code, stdout and stderr, so tests call it
 * in-process; main.ts writes them out. Exit 0 success, 2 invalid input (messages on stderr only),
 * 1 internal error. Nothing here writes a file: `sheet -o OUT` returns the file to write, and main.ts writes it
 * (deliver.ts).
 */
import { LIMITS, formatProblem, isProblem, parseBeamlineText, parseQuantity, within } from '../beamline/index.ts';
import { formatLevelsTable, levelsListing, runDocumentText } from '../engine/index.ts';
import { formatHalfInteger } from '../physics/spin.ts';
import { buildSheet, sheetHtml } from '../sheet/index.ts';
import { basename } from 'node:path';
import { LINE_CAUTIONS, formatSpeciesPanel, lookupSpecies, unknownSpeciesMessage } from '../species/index.ts';
import { type OptionSpec, parseArgs } from './args.ts';
import { formatRun } from './format.ts';
import { type Paper, isSameFile, outputFormatOf } from './output.ts';
import { withPaper } from './pdf.ts';
import { readBeamlineFile } from './readFile.ts';
import { problemsOut } from './common.ts';
import { SCAN_OPTIONS, cmdScanWith } from './scan.ts';
import { BUDGET_OPTIONS, cmdBudgetWith } from './budget.ts';
import { FIT_OPTIONS, cmdFitWith } from './fit.ts';
import { SIMULATE_OPTIONS, cmdSimulateWith } from './simulate.ts';
import { type CliOutput, bad, ok, quickAnswer } from './quick.ts';
import { COMMAND_HELP, USAGE } from './usage.ts';
import { progressOf } from './progress.ts';

const HELP: OptionSpec = { name: 'help', value: false, short: 'h' };
const JSON_OPT: OptionSpec = { name: 'json', value: false };
/** Run a line whose estimated cost is above the engine's ask limit (engine/cost.ts); its refusal limits still hold. */
export const ACCEPT_COST_OPT: OptionSpec = { name: 'accept-cost', value: false };

/** Read options, answer --help, and check the number of positional arguments. */
function commandArgs(command: string, argv: readonly string[], specs: OptionSpec[], positional: { min: number; max: number; what: string }) {
  const r = parseArgs(argv, [...specs, HELP], command);
  if (!r.ok) return { out: bad(`spinyard ${command}: ${r.message}`, `Run "spinyard ${command} --help" for its use.`) };
  if (r.args.options.help) return { out: ok(COMMAND_HELP[command]) };
  const n = r.args.positional.length;
  if (n < positional.min) return { out: bad(`spinyard ${command}: missing ${positional.what}`, `Run "spinyard ${command} --help" for its use.`) };
  if (n > positional.max) {
    const extra = r.args.positional.slice(positional.max).map((a) => `"${a}"`).join(' ');
    return { out: bad(`spinyard ${command}: unexpected argument ${extra} (${command} takes ${positional.max === 0 ? 'no arguments' : `one ${positional.what}`})`) };
  }
  return { args: r.args };
}


/** The arguments of a command that takes one FILE, and the file's text; `out` when either fails. */
function fileCommand(command: string, argv: readonly string[], specs: OptionSpec[] = []):
  | { out: CliOutput }
  | { out?: undefined; file: string; text: string; options: Record<string, unknown> } {
  const c = commandArgs(command, argv, specs, { min: 1, max: 1, what: 'FILE' });
  if (c.out) return { out: c.out };
  const file = c.args.positional[0];
  const text = readBeamlineFile(file);
  if (!text.ok) return { out: bad(text.message) };
  return { file, text: text.text, options: c.args.options };
}

function cmdRun(argv: readonly string[]): CliOutput {
  const f = fileCommand('run', argv, [JSON_OPT, ACCEPT_COST_OPT]);
  if (f.out) return f.out;
  const { file, text } = f;
  const r = runDocumentText(text, { acceptCost: f.options['accept-cost'] === true, onProgress: progressOf('run') });
  if (!r.ok) return problemsOut(file, r.problems, r.cost);
  if (f.options.json) return ok(`${JSON.stringify(r.result, null, 2)}\n`);
  const title = r.line.title || '(untitled)';
  const sp = r.line.species;
  const species = sp.kind === 'named' ? sp.name : `bare spin ${formatHalfInteger(sp.j2, false)}`;
  return ok(formatRun(r.result, `${title}  [${file}; species ${species}]`) + cautionsText(sp.kind === 'named' ? sp.name : undefined));
}

/** The species' cautions (hot ovens, alkali metals, discharges) and the line cautions, as the setup sheet shows them. */
function cautionsText(name: string | undefined): string {
  const s = name === undefined ? undefined : lookupSpecies(name);
  const isotopes = !s || s.kind === 'bare' ? [] : s.kind === 'atom' ? [s] : s.parts.map((p) => p.species);
  const list = [...new Set([...isotopes.flatMap((i) => i.cautions ?? []), ...LINE_CAUTIONS])];
  return ['', 'Cautions', ...list.map((c) => `  - ${c}`)].join('\n') + '\n';
}

const OUTPUT_OPT: OptionSpec = { name: 'output', value: true, short: 'o' };
const PAPER_OPT: OptionSpec = { name: 'paper', value: true };
const PAPERS: readonly Paper[] = ['a4', 'letter'];

/**
 * The setup sheet of FILE: one printable HTML document on stdout, or with `-o OUT.pdf|OUT.html` the file to
 * write (main.ts prints the PDF with the browser and writes atomically). `--paper a4|letter` (default A4).
 */
function cmdSheet(argv: readonly string[]): CliOutput {
  const f = fileCommand('sheet', argv, [OUTPUT_OPT, PAPER_OPT, ACCEPT_COST_OPT]);
  if (f.out) return f.out;
  const { file, text } = f;
  const output = f.options.output;
  const paperText = f.options.paper;
  const paper = typeof paperText === 'string' ? (paperText.toLowerCase() as Paper) : 'a4';
  if (!PAPERS.includes(paper)) return bad(`spinyard sheet: --paper: expected a4 or letter, got "${String(paperText)}"`);
  let format: 'pdf' | 'html' | undefined;
  if (typeof output === 'string') {
    if (output === '') return bad('spinyard sheet: -o: the output file name is empty');
    format = outputFormatOf(output);
    if (!format) return bad(`spinyard sheet: -o ${output}: the output must end in .pdf or .html (the sheet is printed to PDF or written as HTML)`);
    if (isSameFile(file, output)) return bad(`spinyard sheet: -o ${output} is the input document ${file}; the sheet is never written over its document`);
  }
  const r = runDocumentText(text, { acceptCost: f.options['accept-cost'] === true, onProgress: progressOf('sheet') });
  if (!r.ok) return problemsOut(file, r.problems, r.cost);
  const generatedAt = `${new Date().toISOString().slice(0, 16).replace('T', ' ')} UTC from ${file}`;
  const html = withPaper(sheetHtml(buildSheet(r.doc, r.line, r.result, { generatedAt, source: { fileName: basename(file), text } })), paper);
  if (typeof output !== 'string' || !format) return ok(html);
  return { code: 0, stdout: '', stderr: '', file: { path: output, format, html, input: file } };
}

function cmdScan(argv: readonly string[]): CliOutput {
  const c = commandArgs('scan', argv, [...SCAN_OPTIONS], { min: 1, max: 1, what: 'FILE' });
  if (c.out) return c.out;
  const file = c.args.positional[0];
  const text = readBeamlineFile(file);
  if (!text.ok) return bad(text.message);
  return cmdScanWith(file, text.text, c.args.options, c.args.lists);
}

function cmdBudget(argv: readonly string[]): CliOutput {
  const f = fileCommand('budget', argv, [...BUDGET_OPTIONS]);
  if (f.out) return f.out;
  return cmdBudgetWith(f.file, f.text, f.options);
}

function cmdFit(argv: readonly string[]): CliOutput {
  const f = fileCommand('fit', argv, [...FIT_OPTIONS]);
  if (f.out) return f.out;
  return cmdFitWith(f.file, f.text, f.options);
}

function cmdSimulate(argv: readonly string[]): CliOutput {
  const f = fileCommand('simulate', argv, [...SIMULATE_OPTIONS]);
  if (f.out) return f.out;
  return cmdSimulateWith(f.file, f.text, f.options);
}

function cmdValidate(argv: readonly string[]): CliOutput {
  const f = fileCommand('validate', argv);
  if (f.out) return f.out;
  const { file, text } = f;
  const r = parseBeamlineText(text);
  if (!r.ok) return problemsOut(file, r.problems.map(formatProblem));
  return ok([`${file}: valid`, ...r.warnings.map((w) => `warning: ${formatProblem(w)}`)].join('\n') + '\n');
}

function cmdLevels(argv: readonly string[]): CliOutput {
  const c = commandArgs('levels', argv, [JSON_OPT, { name: 'field', value: true }], { min: 1, max: 1, what: 'species NAME' });
  if (c.out) return c.out;
  const name = c.args.positional[0];
  const fieldText = c.args.options.field;
  if (typeof fieldText !== 'string') return bad('spinyard levels: missing --field, the field size with a unit (e.g. --field "0.5 T")');
  const field = parseQuantity(fieldText, 'field', '--field');
  if (isProblem(field)) return bad(`spinyard levels: ${formatProblem(field)}`);
  if (field < 0) return bad(`spinyard levels: --field: the field size must be ≥ 0 T, got ${fieldText}`);
  if (!within(field, LIMITS.fieldSize)) return bad(`spinyard levels: --field: the field size must be ${LIMITS.fieldSize.text}, got ${fieldText}`);
  const s = lookupSpecies(name);
  if (!s) return bad(`spinyard levels: ${unknownSpeciesMessage(name)}`);
  if (s.kind === 'bare') return bad(`spinyard levels: ${name} is a bare spin; levels lists library atoms (hyperfine structure)`);
  const listing = levelsListing(name, field);
  return ok(c.args.options.json ? `${JSON.stringify(listing, null, 2)}\n` : `${formatLevelsTable(listing)}\n`);
}

function cmdSpecies(argv: readonly string[]): CliOutput {
  const c = commandArgs('species', argv, [], { min: 0, max: 1, what: 'species NAME' });
  if (c.out) return c.out;
  const name = c.args.positional[0];
  if (name !== undefined && !lookupSpecies(name)) return bad(`spinyard species: ${unknownSpeciesMessage(name)}`);
  return ok(`${formatSpeciesPanel(name)}\n`);
}

function cmdHelp(argv: readonly string[]): CliOutput {
  const c = commandArgs('help', argv, [], { min: 0, max: 1, what: 'COMMAND' });
  if (c.out) return c.out;
  const topic = c.args.positional[0];
  if (topic === undefined) return ok(USAGE);
  const text = COMMAND_HELP[topic];
  return text ? ok(text) : bad(`spinyard help: unknown command "${topic}"; commands: ${Object.keys(COMMANDS).join(', ')}`);
}

export const COMMANDS: Readonly<Record<string, (argv: readonly string[]) => CliOutput>> = {
  run: cmdRun,
  sheet: cmdSheet,
  scan: cmdScan,
  budget: cmdBudget,
  fit: cmdFit,
  simulate: cmdSimulate,
  validate: cmdValidate,
  levels: cmdLevels,
  species: cmdSpecies,
  help: cmdHelp,
};

/** The whole command line: argv without "node" and the script. */
export function runCli(argv: readonly string[]): CliOutput {
  const quick = quickAnswer(argv);
  if (quick) return quick;
  const [first, ...rest] = argv;
  const cmd = Object.hasOwn(COMMANDS, first) ? COMMANDS[first] : undefined;
  if (!cmd) {
    const what = first.startsWith('-') ? `unknown option ${first}` : `unknown command "${first}"`;
    return bad(`spinyard: ${what}; commands: ${Object.keys(COMMANDS).join(', ')}`, 'Run "spinyard --help" for the use.');
  }
  try {
    return cmd(rest);
  } catch (err) {
    const e = err as Error;
    const detail = process.env.SPINYARD_DEBUG ? `\n${e.stack ?? ''}` : ' (set SPINYARD_DEBUG=1 for the stack trace)';
    return { code: 1, stdout: '', stderr: `spinyard: internal error: ${e.message ?? String(err)}${detail}\nThis is a bug in Spinyard, not in the input; please report it with the file.\n` };
  }
}
