// Sends each new document to the engine as its normalized line: the document is read and validated once
// per document object (checkDocument keeps the answer and the file text), and it is not sent again when
// its text equals the one sent last (an undo back to it, a re-render). After "Run anyway", the edits of the same
// document run without asking again while the engine's estimate stays within ACCEPTED_GROWTH of the one accepted;
// a document opened anew (reset) asks again.

import { checkDocument, estimatedSeconds, type Beamline, type BeamlineDoc } from './core-adapter.ts';

/** How far the estimate of an edited line may grow over the one a "Run anyway" accepted before the app asks again. */
export const ACCEPTED_GROWTH = 4;

export interface EngineFeed {
  /** Sends `doc`'s line as a new request unless `doc` is invalid or has the text sent last; true when sent. */
  send(doc: BeamlineDoc): boolean;
  /** The next document is sent even when its text equals the last one sent (a document opened anew); a "Run anyway"
   *  given to the document before is forgotten. */
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
  /** The estimate (s) up to which the edits of this document run unasked: 0 until a "Run anyway". */
  let acceptUpTo = 0;
  return {
    send(doc) {
      const r = checkDocument(doc);
      if (!r.ok || r.text === sentText) return false;
      sentText = r.text;
      sentLine = r.line;
      seq += 1;
      onSeq(seq);
      if (acceptUpTo > 0 && estimatedSeconds(r.line) <= acceptUpTo) run(seq, r.line, true);
      else run(seq, r.line);
      return true;
    },
    reset() {
      sentText = undefined;
      acceptUpTo = 0;
    },
    runAnyway() {
      if (!sentLine) return false;
      seq += 1;
      onSeq(seq);
      const e = estimatedSeconds(sentLine);
      if (Number.isFinite(e)) acceptUpTo = Math.max(acceptUpTo, ACCEPTED_GROWTH * e);
      run(seq, sentLine, true);
      return true;
    },
  };
}
