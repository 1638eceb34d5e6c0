/** Sample lines run through the engine, for the sheet tests. */
import { readFileSync } from 'node:fs';
import { runDocumentText } from '../../src/engine/index.ts';

export function runSample(name: string) {
  const text = readFileSync(new URL(`../../samples/${name}.spinyard`, import.meta.url), 'utf8');
  const r = runDocumentText(text);
  if (!r.ok) throw new Error(`sample ${name} must run: ${r.problems.join('; ')}`);
  return { ...r, text };
}

export function runText(text: string) {
  const r = runDocumentText(text);
  if (!r.ok) throw new Error(`line must run: ${r.problems.join('; ')}`);
  return r;
}
