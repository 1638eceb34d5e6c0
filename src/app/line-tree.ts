// The line as a tree for the editor: from the oven, elements in series form a branch; each magnet port
// opens a nested branch. An element reached a second time (paths may share elements) appears as a
// reference to its first place.

import { type BeamlineDoc, type ElementKind, outputsOf } from './core-adapter.ts';

export interface TreeItem {
  /** Unique key in the tree ("M1", "M1/+1/2/D1"). */
  key: string;
  id: string;
  kind: string;
  /** Shown again where a second path reaches it; its ports are listed at its first place. */
  shared: boolean;
  ports?: TreePort[];
}

export interface TreePort {
  label: string;
  target: string;
  branch: TreeItem[];
}

type El = { id: string; kind: ElementKind; to?: string; ports?: Record<string, string> };

export function lineTree(doc: BeamlineDoc): TreeItem[] {
  const els = doc.elements as unknown as El[];
  const byId = new Map(els.map((e) => [e.id, e]));
  const shown = new Set<string>();
  const branch = (start: string, keyBase: string, depth: number): TreeItem[] => {
    const out: TreeItem[] = [];
    let id: string | undefined = start;
    while (id && id !== 'stop' && depth < 200) {
      const e = byId.get(id);
      if (!e) break;
      const key = keyBase ? `${keyBase}/${id}` : id;
      if (shown.has(id)) {
        out.push({ key, id, kind: e.kind, shared: true });
        break;
      }
      shown.add(id);
      // the one routing rule (the kind modules' outputsOf): a magnet's ports open branches, else the single output
      const outs = outputsOf(e);
      if (outs.some((o) => o.port !== null)) {
        const ports = outs.map(({ port, target }) => ({
          label: port!,
          target,
          branch: branch(target, `${key}/${port}`, depth + 1),
        }));
        out.push({ key, id, kind: e.kind, shared: false, ports });
        break;
      }
      out.push({ key, id, kind: e.kind, shared: false });
      id = outs[0]?.target;
      depth++;
    }
    return out;
  };
  return branch(doc.oven.to, '', 0);
}

/** Element ids not reached from the oven (shown apart, so nothing in the file is hidden). */
export function unreached(doc: BeamlineDoc, tree: readonly TreeItem[]): string[] {
  const seen = new Set<string>();
  const walk = (items: readonly TreeItem[]) => {
    for (const it of items) {
      seen.add(it.id);
      for (const p of it.ports ?? []) walk(p.branch);
    }
  };
  walk(tree);
  return (doc.elements as { id: string }[]).map((e) => e.id).filter((id) => !seen.has(id));
}
