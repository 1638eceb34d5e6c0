// The sample beamlines shipped in samples/*.spinyard, listed with their document titles.

import * as nodeFs from 'node:fs/promises';
import * as path from 'node:path';
import { isSampleName, MAX_TITLE_CHARS, type HostDocument, type SampleInfo } from '../../src/host/contract.ts';

export interface SamplesFs {
  readdir(dir: string): Promise<string[]>;
  readFile(file: string, enc: 'utf8'): Promise<string>;
}

/** The `title` of a document text, when it is JSON with a string title. */
export function titleOfDocument(text: string): string | undefined {
  try {
    const v: unknown = JSON.parse(text);
    const t = (v as { title?: unknown } | null)?.title;
    return typeof t === 'string' && t.length > 0 ? t.slice(0, MAX_TITLE_CHARS) : undefined;
  } catch {
    return undefined;
  }
}

/** The samples of `dir`, sorted by name; files that are not sample names are skipped. */
export async function listSamples(dir: string, fs: SamplesFs = nodeFs as unknown as SamplesFs): Promise<SampleInfo[]> {
  let names: string[];
  try {
    names = await fs.readdir(dir);
  } catch {
    return [];
  }
  const out: SampleInfo[] = [];
  for (const name of names.filter(isSampleName).sort()) {
    let title: string | undefined;
    try {
      title = titleOfDocument(await fs.readFile(path.join(dir, name), 'utf8'));
    } catch {
      continue;
    }
    out.push(title ? { name, title } : { name });
  }
  return out;
}

/** A sample as an untitled document (no path: saving it asks where, so the shipped file stays as is). */
export async function readSample(dir: string, name: string, fs: SamplesFs = nodeFs as unknown as SamplesFs): Promise<HostDocument> {
  if (!isSampleName(name)) throw new Error(`"${name}" is not a sample name (NAME.spinyard, no folders).`);
  try {
    return { name, text: await fs.readFile(path.join(dir, name), 'utf8') };
  } catch {
    throw new Error(`Sample ${name} is not in ${dir}.`);
  }
}
