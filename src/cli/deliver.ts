/**
 * Writes what a command returned as a file (`spinyard sheet FILE -o OUT.pdf|OUT.html`): the HTML as it is,
 * or printed to PDF by the browser (pdf.ts), always atomically (output.ts). A missing browser is one line and
 * exit 2; a browser that fails to print, or a file that cannot be written, is one line and exit 1. Nothing is
 * left behind when a step fails, and OUT keeps its old content.
 */
import type { FoundBrowser } from './find-browser.ts';
import { BrowserMissingError } from './find-browser.ts';
import { writeFailure, writeFileAtomic } from './output.ts';
import { PrintError, printPdf } from './pdf.ts';
import type { CliOutput } from './quick.ts';

export interface DeliverOptions {
  /** The browser finder (tests pass one that fails). */
  find?: () => Promise<FoundBrowser>;
}

/** `out` with its file written: the same output without `file`, or the failure. */
export async function deliver(out: CliOutput, opts: DeliverOptions = {}): Promise<CliOutput> {
  const f = out.file;
  if (!f || out.code !== 0) return out;
  let bytes: string | Uint8Array = f.html;
  const command = f.command ?? 'sheet';
  let printedBy = '';
  if (f.format === 'pdf') {
    try {
      const printed = await printPdf(f.html, opts.find);
      bytes = printed.pdf;
      printedBy = `, printed by the ${printed.browser.description}`;
    } catch (e) {
      if (e instanceof BrowserMissingError) return { code: 2, stdout: '', stderr: `spinyard sheet: ${e.message}\n` };
      if (e instanceof PrintError) return { code: 1, stdout: '', stderr: `spinyard sheet: ${e.message}\n` };
      throw e;
    }
  }
  try {
    writeFileAtomic(f.path, bytes);
  } catch (e) {
    return { code: 1, stdout: '', stderr: `spinyard ${command}: ${writeFailure(f.path, e)}\n` };
  }
  if (f.format === 'text') return { code: 0, stdout: `${out.stdout}${f.path}: ${f.what ?? 'output'} of ${f.input}\n`, stderr: out.stderr };
  return { code: 0, stdout: `${f.path}: setup sheet of ${f.input} (${f.format === 'pdf' ? `PDF${printedBy}` : 'HTML'})\n`, stderr: out.stderr };
}
