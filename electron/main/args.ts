// Documents named on the command line ("spinyard bench-b.spinyard", a file double-clicked in the file
// manager, or a second instance's argv forwarded by the single-instance lock).

import * as path from 'node:path';
import { DOCUMENT_EXTENSION } from '../../src/host/contract.ts';

/** The .spinyard files among `argv` (after the executable and, unpackaged, the app path), made absolute
 *  against `cwd`. Switches ("--flag") are skipped. */
export function documentArgs(argv: readonly string[], cwd: string, packaged: boolean): string[] {
  const rest = argv.slice(packaged ? 1 : 2);
  return rest
    .filter((a) => !a.startsWith('-') && a.toLowerCase().endsWith(DOCUMENT_EXTENSION))
    .map((a) => (path.isAbsolute(a) ? path.normalize(a) : path.resolve(cwd, a)));
}
