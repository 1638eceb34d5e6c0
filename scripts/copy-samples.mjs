// Copies samples/*.spinyard into dist-web/samples/ and writes dist-web/samples/index.json
// ({ samples: [{ name, title }] }: `name` is the file name; the form src/host/contract.ts
// parseSampleIndex reads, which allows no other keys). A sample that is not JSON is copied and listed
// without a title.
import { readdir, readFile, mkdir, copyFile, writeFile } from 'node:fs/promises';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
// SPINYARD_SAMPLES names another sample folder (a build for a lab's own set).
const from = process.env.SPINYARD_SAMPLES ?? join(root, 'samples');
const to = join(root, 'dist-web', 'samples');

await mkdir(to, { recursive: true });
let names = [];
try {
  names = (await readdir(from)).filter((n) => n.endsWith('.spinyard')).sort();
} catch {
  names = [];
}
const samples = [];
for (const name of names) {
  await copyFile(join(from, name), join(to, name));
  let title;
  try {
    const doc = JSON.parse(await readFile(join(from, name), 'utf8'));
    if (typeof doc.title === 'string') title = doc.title;
  } catch (e) {
    console.warn(`copy-samples: ${name} is not valid JSON (${e.message}); listed without a title`);
  }
  samples.push(title === undefined ? { name } : { name, title });
}
await writeFile(join(to, 'index.json'), JSON.stringify({ samples }, null, 2) + '\n');
console.log(`copy-samples: ${samples.length} sample(s) → dist-web/samples/`);
