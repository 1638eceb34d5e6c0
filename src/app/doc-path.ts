// Reading a value of the raw document at a JSON path of the form the document layer reports
// ("elements[2].axis.roll", "oven.velocity.speed", "elements[0].ports[\"+1/2\"]").

/** The keys of a JSON path, or undefined when it is not one. */
export function pathKeys(path: string): (string | number)[] | undefined {
  const out: (string | number)[] = [];
  const re = /(?:^|\.)([A-Za-z_$][A-Za-z0-9_$]*)|\[(\d+)\]|\[("(?:[^"\\]|\\.)*")\]/gy;
  let m: RegExpExecArray | null;
  let pos = 0;
  while (pos < path.length) {
    re.lastIndex = pos;
    m = re.exec(path);
    if (!m) return undefined;
    if (m[1] !== undefined) out.push(m[1]);
    else if (m[2] !== undefined) out.push(Number(m[2]));
    else out.push(JSON.parse(m[3]) as string);
    pos = re.lastIndex;
  }
  return out;
}

export function getAt(doc: unknown, path: string): unknown {
  const keys = pathKeys(path);
  if (!keys) return undefined;
  let v: unknown = doc;
  for (const k of keys) {
    if (v === null || typeof v !== 'object') return undefined;
    v = (v as Record<string | number, unknown>)[k];
  }
  return v;
}

/** "elements[2]" + "axis.roll" → "elements[2].axis.roll" */
export function joinPath(base: string, rel: string): string {
  if (!base) return rel;
  return rel.startsWith('[') ? base + rel : `${base}.${rel}`;
}

/** The index of an element in the document by id, or -1. */
export function elementIndex(doc: { elements: readonly { id: string }[] }, id: string): number {
  return doc.elements.findIndex((e) => e.id === id);
}
