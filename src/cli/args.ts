/** Command-line arguments: options of one command, read strictly (an unknown option is an error, never ignored). */

export interface OptionSpec {
  /** Long name without the dashes ("json", "field"). */
  readonly name: string;
  /** true: the option takes a value (`--field "0.5 T"` or `--field=0.5 T`). */
  readonly value: boolean;
  /** One-letter alias without the dash. */
  readonly short?: string;
  /** The option may be given more than once (a valued option): its values in order are in `lists`. */
  readonly repeat?: boolean;
}

export interface ParsedArgs {
  readonly positional: string[];
  /** Boolean options as true, valued options as their text. */
  readonly options: Record<string, string | true>;
  /** Every value of a repeatable option, in the order given (the first is also in `options`). */
  readonly lists: Record<string, string[]>;
}

export type ArgsResult = { ok: true; args: ParsedArgs } | { ok: false; message: string };

/**
 * Read `argv` against the options of a command. "--" ends the options; "-" alone is a positional.
 * A repeated option is an error (two different values would silently drop one).
 */
export function parseArgs(argv: readonly string[], specs: readonly OptionSpec[], command: string): ArgsResult {
  const positional: string[] = [];
  const options: Record<string, string | true> = {};
  const lists: Record<string, string[]> = {};
  const known = () => `${command} takes ${specs.length ? specs.map((o) => `--${o.name}`).join(', ') : 'no options'}`;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--') {
      positional.push(...argv.slice(i + 1));
      break;
    }
    if (a.length < 2 || !a.startsWith('-')) {
      positional.push(a);
      continue;
    }
    let name: string;
    let inline: string | undefined;
    if (a.startsWith('--')) {
      const eq = a.indexOf('=');
      name = eq < 0 ? a.slice(2) : a.slice(2, eq);
      inline = eq < 0 ? undefined : a.slice(eq + 1);
    } else {
      const short = specs.find((o) => o.short === a.slice(1));
      if (!short) return { ok: false, message: `unknown option ${a}: ${known()}` };
      name = short.name;
    }
    const spec = specs.find((o) => o.name === name);
    if (!spec) return { ok: false, message: `unknown option ${a}: ${known()}` };
    if (name in options && !spec.repeat) return { ok: false, message: `--${name} is given twice` };
    if (!spec.value) {
      if (inline !== undefined) return { ok: false, message: `--${name} takes no value, got "${a}"` };
      options[name] = true;
      continue;
    }
    const v = inline ?? argv[++i];
    if (v === undefined) return { ok: false, message: `--${name} needs a value` };
    if (!(name in options)) options[name] = v;
    if (spec.repeat) (lists[name] ??= []).push(v);
  }
  return { ok: true, args: { positional, options, lists } };
}
