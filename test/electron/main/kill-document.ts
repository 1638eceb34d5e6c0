// The document of the atomic-save kill test (atomic-save.kill.test.ts): a beamline-shaped JSON text of
// about `bytes` bytes whose every row names its version, so that a file mixing two versions, a truncated
// one or an empty one is never mistaken for a whole version (the test compares whole texts). The same function runs in the test and in
// the child process it kills.

/** The text of version `version` (a non-negative integer), at least `bytes` long. */
export function killTestDocument(version: number, bytes: number): string {
  const head = `{\n  "format": "spinyard.beamline",\n  "title": "Bench K oven drift log, revision ${version}",\n  "velocityTable": [\n`;
  // 4096 rows, repeated: speed in mm/s and a weight in parts per million, both moved by the revision
  let block = '';
  for (let i = 0; i < 4096; i++) block += `    ["${150_000 + 10 * i + version} mm/s", ${(i * 7919 + version * 104_729) % 1_000_003}e-6],\n`;
  const text = head + block.repeat(Math.max(1, Math.ceil((bytes - head.length) / block.length)));
  return `${text}    ["0 m/s", 0]\n  ],\n  "revision": ${version}\n}\n`;
}

/** The revision a kill-test document names in its first line, or null when the text has none. */
export function revisionOf(text: string): number | null {
  const m = /revision (\d+)"/.exec(text.slice(0, 200));
  return m ? Number(m[1]) : null;
}
