// The line as a tree: oven, elements in series, ports nested; shared elements shown as references.
import type { TreeItem } from '../line-tree.ts';

interface Props {
  items: readonly TreeItem[];
  unreached: readonly string[];
  selected?: string;
  warned: ReadonlySet<string>;
  onSelect(id: string): void;
}

const KIND_MARK: Record<string, string> = {
  magnet: 'SG', detector: 'D', slit: 'S', rotator: 'R', field: 'B', twist: 'T', rf: 'RF', recombiner: 'RC',
};

export function Tree({ items, unreached, selected, warned, onSelect }: Props) {
  const node = (it: TreeItem) => (
    <li key={it.key} role="none">
      <button type="button" role="treeitem" aria-selected={selected === it.id} className={`tree-item${selected === it.id ? ' selected' : ''}`}
        data-id={it.id} onClick={() => onSelect(it.id)}>
        <span className={`kind-mark k-${it.kind}`} aria-hidden="true">{KIND_MARK[it.kind] ?? '?'}</span>
        <span className="tree-id">{it.id}</span>
        <span className="tree-kind">{it.kind}{it.shared ? ' · shared' : ''}</span>
        {warned.has(it.id) && <span className="warn-mark" title="the engine warns about this element">⚠</span>}
      </button>
      {it.ports && (
        <ul role="group">
          {it.ports.map((p) => (
            <li key={p.label} role="none" className="tree-port">
              <span className="port-label">{p.label === '*' ? 'other ports' : p.label}</span>
              {p.target === 'stop' ? <span className="tree-stop"> → stop</span> : <ul role="group">{p.branch.map(node)}</ul>}
            </li>
          ))}
        </ul>
      )}
    </li>
  );
  return (
    <nav className="tree" aria-label="Line tree">
      <ul role="tree" aria-label="Elements of the line">
        <li role="none">
          <button type="button" role="treeitem" aria-selected={selected === 'oven'} className={`tree-item${selected === 'oven' ? ' selected' : ''}`}
            data-id="oven" onClick={() => onSelect('oven')}>
            <span className="kind-mark k-oven" aria-hidden="true">O</span>
            <span className="tree-id">oven</span>
            <span className="tree-kind">source</span>
            {warned.has('oven') && <span className="warn-mark">⚠</span>}
          </button>
          <ul role="group">{items.map(node)}</ul>
        </li>
        {unreached.length > 0 && (
          <li role="none" className="tree-unreached">
            <span>not reached from the oven</span>
            <ul role="group">
              {unreached.map((id) => (
                <li key={id} role="none">
                  <button type="button" role="treeitem" aria-selected={selected === id} className="tree-item" data-id={id} onClick={() => onSelect(id)}>
                    <span className="tree-id">{id}</span>
                  </button>
                </li>
              ))}
            </ul>
          </li>
        )}
      </ul>
    </nav>
  );
}
