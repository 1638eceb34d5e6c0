import { describe, expect, it } from 'vitest';
import { parseArgs } from '../../src/cli/args.ts';

const specs = [{ name: 'json', value: false }, { name: 'field', value: true }, { name: 'help', value: false, short: 'h' }];

describe('parseArgs', () => {
  it('separates positionals from options, in any order', () => {
    expect(parseArgs(['Rb-87', '--field', '0.5 T', '--json'], specs, 'levels')).toEqual({ ok: true, args: { positional: ['Rb-87'], options: { field: '0.5 T', json: true }, lists: {} } });
    expect(parseArgs(['--field=0.5 T', 'Rb-87'], specs, 'levels')).toEqual({ ok: true, args: { positional: ['Rb-87'], options: { field: '0.5 T' }, lists: {} } });
  });

  it('takes everything after "--" as positional, so a file may start with a dash', () => {
    expect(parseArgs(['--', '--json'], specs, 'run')).toEqual({ ok: true, args: { positional: ['--json'], options: {}, lists: {} } });
  });

  it('reads a short alias', () => {
    expect(parseArgs(['-h'], specs, 'run')).toEqual({ ok: true, args: { positional: [], options: { help: true }, lists: {} } });
  });

  it('refuses unknown, repeated, value-less and value-carrying-flag options', () => {
    expect(parseArgs(['--jsn'], specs, 'run')).toEqual({ ok: false, message: 'unknown option --jsn: run takes --json, --field, --help' });
    expect(parseArgs(['-x'], specs, 'run').ok).toBe(false);
    expect(parseArgs(['--json', '--json'], specs, 'run')).toEqual({ ok: false, message: '--json is given twice' });
    expect(parseArgs(['--field'], specs, 'run')).toEqual({ ok: false, message: '--field needs a value' });
    expect(parseArgs(['--json=yes'], specs, 'run').ok).toBe(false);
  });

  it('collects a repeatable option\'s values in order', () => {
    const rs = [{ name: 'param', value: true, repeat: true }, { name: 'json', value: false }];
    const r = parseArgs(['f', '--param', 'a', '--param=b', '--json'], rs, 'scan');
    expect(r).toEqual({ ok: true, args: { positional: ['f'], options: { param: 'a', json: true }, lists: { param: ['a', 'b'] } } });
    expect(parseArgs(['--json', '--json'], rs, 'scan')).toEqual({ ok: false, message: '--json is given twice' });
  });
});
