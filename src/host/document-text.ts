// The size limit and the text rule of a beamline document file, one for every reader: the Electron shell
// (electron/main, which may import only src/host), the browser host and, by value, the command line.
// The command line reads through src/cli/readFile.ts, with src/beamline's DEFAULT_MAX_BYTES and the same
// strict decoding; src/cli may not import src/host, nor electron/main src/beamline, so the two are held
// equal by test/host/document-text.test.ts (the limit, the wording and each valid and invalid sequence).

/** Largest document file read: 20 MiB, the command line's DEFAULT_MAX_BYTES (src/beamline/text.ts). */
export const MAX_DOCUMENT_BYTES = 20 * 1024 * 1024;

function mb(n: number): string {
  return `${(n / (1024 * 1024)).toFixed(1)} MB`;
}

/** Why a file of `bytes` bytes is not read, in the command line's words; undefined within the limit. */
export function documentSizeProblem(bytes: number, maxBytes: number = MAX_DOCUMENT_BYTES): string | undefined {
  if (bytes <= maxBytes) return undefined;
  return `the file is ${mb(bytes)}, over the ${mb(maxBytes)} limit for a beamline document; it was not read`;
}

/** What a reader says of a file that is not UTF-8, after the file's name. */
export const NOT_UTF8 = 'it is not UTF-8 text (a beamline file is UTF-8 JSON)';

/** The text of `bytes` decoded as UTF-8, strictly (a byte order mark dropped, as the command line does),
 *  or null when they are not UTF-8: no replacement characters, ever. */
export function decodeUtf8Strict(bytes: Uint8Array): string | null {
  try {
    return new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    return null;
  }
}
