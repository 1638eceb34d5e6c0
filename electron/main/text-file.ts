// Saving a text export (the ports table as CSV) from the main process: the save dialog's options and the
// file the export goes to. Electron-free, so it is tested in Node; main.ts shows the dialog and writes
// the file atomically.

import * as path from 'node:path';
import { DOCUMENT_EXTENSION, fileExtension } from '../../src/host/contract.ts';

const FILTER_NAMES: Readonly<Record<string, string>> = {
  csv: 'CSV (comma-separated values)',
  tsv: 'TSV (tab-separated values)',
  txt: 'Text',
};

export interface TextFileDialog {
  title: string;
  defaultPath: string;
  filters: { name: string; extensions: string[] }[];
  properties: ('showOverwriteConfirmation' | 'createDirectory')[];
}

/** The save dialog for export `name` (a checked TextFileRequest name): beside the window's document
 *  when it has a file, else in the documents folder. */
export function textFileDialog(name: string, documentPath: string | undefined, documentsDir: string): TextFileDialog {
  const ext = fileExtension(name);
  return {
    title: `Save ${name}`,
    defaultPath: path.join(documentPath ? path.dirname(documentPath) : documentsDir, name),
    filters: [{ name: FILTER_NAMES[ext] ?? ext.toUpperCase(), extensions: [ext] }, { name: 'All files', extensions: ['*'] }],
    properties: ['showOverwriteConfirmation', 'createDirectory'],
  };
}

/** The file to write for the path the user picked: with the export's extension added when the picked
 *  name has none. An export never replaces a beamline document: a .spinyard target is refused. */
export function textFileTarget(picked: string, name: string): string {
  if (picked.toLowerCase().endsWith(DOCUMENT_EXTENSION)) {
    throw new Error(`${picked} is a beamline document: an export is not written over it. Choose a name ending in .${fileExtension(name)}.`);
  }
  return path.extname(picked) === '' ? `${picked}.${fileExtension(name)}` : picked;
}
