import * as path from 'node:path';
import { describe, expect, it } from 'vitest';
import { documentArgs } from '../../../electron/main/args.ts';

describe('documentArgs', () => {
  it('takes the .spinyard arguments after the app path (unpackaged) and makes them absolute', () => {
    const argv = ['/usr/bin/electron', '.', '--enable-logging', 'bench.spinyard', 'notes.txt', '/lab/roll.SPINYARD'];
    expect(documentArgs(argv, '/home/lab', false)).toEqual([path.resolve('/home/lab', 'bench.spinyard'), '/lab/roll.SPINYARD']);
  });
  it('takes them right after the executable when packaged', () => {
    expect(documentArgs(['/opt/Spinyard/spinyard', 'a.spinyard'], '/w', true)).toEqual([path.resolve('/w', 'a.spinyard')]);
    expect(documentArgs(['/opt/Spinyard/spinyard'], '/w', true)).toEqual([]);
  });
});
