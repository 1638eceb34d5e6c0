// Sends each new document to the engine as its normalized line: the document is read and validated once
// per document object (checkDocument keeps the answer and the file text), and it is not sent again when
// its text equals the one sent last (an undo back to it, a re-render).

import { checkDocument, type Beamline, type BeamlineDoc } from './core-adapter.ts';

export interface EngineFeed {
  /** Sends `doc`'s line as a new request unless `doc` is invalid or has the text sent last; true when sent. */
  send(doc: BeamlineDoc): boolean;
  /** The next document is sent even when its text equals the last one sent (a document opened anew). */
  reset(): void;
}

/** A feed over `run(seq, line)` (the engine client); `onSeq` hears the sequence number of each request. */
export function createEngineFeed(run: (seq: number, line: Beamline) => void, onSeq: (seq: number) => void): EngineFeed {
  let sentText: string | undefined;
  let seq = 0;
  return {
    send(doc) {
      const r = checkDocument(doc);
      if (!r.ok || r.text === sentText) return false;
      sentText = r.text;
      seq += 1;
      onSeq(seq);
      run(seq, r.line);
      return true;
    },
    reset() {
      sentText = undefined;
    },
  };
}
