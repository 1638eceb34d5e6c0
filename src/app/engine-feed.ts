// Sends each new document to the engine as its normalized line: the document is read and validated once
// per document object (checkDocument keeps the answer and the file text), and it is not sent again when
// its text equals the one sent last (an undo back to it, a re-render).

import { checkDocument, type Beamline, type BeamlineDoc } from './core-adapter.ts';

export interface EngineFeed {
  /** Sends `doc`'s line as a new request unless `doc` is invalid or has the text sent last; true when sent. */
  send(doc: BeamlineDoc): boolean;
  /** The next document is sent even when its text equals the last one sent (a document opened anew). */
  reset(): void;
  /** Sends the line sent last again as a new request, run even where the engine's estimate of the work is above its
   *  ask limit ("Run anyway"); false when nothing was sent yet. */
  runAnyway(): boolean;
}

/** A feed over `run(seq, line, acceptCost)` (the engine client); `onSeq` hears the sequence number of each request. */
export function createEngineFeed(run: (seq: number, line: Beamline, acceptCost?: boolean) => void, onSeq: (seq: number) => void): EngineFeed {
  let sentText: string | undefined;
  let sentLine: Beamline | undefined;
  let seq = 0;
  return {
    send(doc) {
      const r = checkDocument(doc);
      if (!r.ok || r.text === sentText) return false;
      sentText = r.text;
      sentLine = r.line;
      seq += 1;
      onSeq(seq);
      run(seq, r.line);
      return true;
    },
    reset() {
      sentText = undefined;
    },
    runAnyway() {
      if (!sentLine) return false;
      seq += 1;
      onSeq(seq);
      run(seq, sentLine, true);
      return true;
    },
  };
}
