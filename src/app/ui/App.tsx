// The renderer: document state (a history of documents), the command registry, the engine worker and
// the panes (tree, schematic, inspector, results).
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { Host, HostDocument, SampleInfo, AutosaveDraft, RecentDocument } from '../../host/contract.ts';
import {
  checkDocument, checkQuantity, documentText, editAddOnPort, editAt, editDelete, editDuplicate, editRename, editReroute,
  lineIsHyperfine, librarySpeciesNames, magnetPortLabels, readDocument, speciesCautions, speciesPortLabels, setupSheetHtml, type BeamlineDoc, type ElementKind, type Problem,
} from '../core-adapter.ts';
import { historyPush, historyRedo, historyStart, historyUndo, type History } from '../history.ts';
import { buildCommands, type AppApi, type AppCtx, type DialogState } from '../app-commands.ts';
import { createRegistry } from '../commands.ts';
import { newDocument } from '../default-doc.ts';
import { lineTree, unreached } from '../line-tree.ts';
import { placeElements } from '../layout.ts';
import { dwellById, portRows, portRowsCsv, warningsByElement, type RunResultView } from '../results.ts';
import { createEngineClient, type EngineStatus } from '../engine-client.ts';
import { defaultVelocity, type FieldSpec, type VelocityKind, NEW_ELEMENT_KINDS } from '../fields.ts';
import { getAt } from '../doc-path.ts';
import { parseEps, moveGap, problemsFor, downloadText, remapPorts } from '../editing.ts';
import { Tree } from './Tree.tsx';
import { Schematic } from './Schematic.tsx';
import { Inspector, type InspectorActions } from './Inspector.tsx';
import { Results } from './Results.tsx';
import { MenuBar } from './MenuBar.tsx';
import { Palette } from './Palette.tsx';
import { Dialog } from './Dialog.tsx';
import { Caution } from './Caution.tsx';

/** The field size given to magnets without one when the species changes to a hyperfine one (a demo set-point, announced). */
const DEFAULT_HYPERFINE_FIELD = '0.5 T';

function lineIsHyperfineSpecies(species: unknown): boolean {
  const labels = speciesPortLabels(species);
  return !!labels && labels.some((l) => l.startsWith('mJ=') || l.startsWith('F='));
}

function draftKey(): string {
  return `doc-${Date.now().toString(36)}-${Math.random().toString(36).slice(2, 8)}`;
}

function docName(doc: BeamlineDoc): string {
  const t = (doc.title ?? 'untitled').toLowerCase().replace(/[^a-z0-9]+/g, '-').replace(/^-|-$/g, '') || 'untitled';
  return `${t}.spinyard`;
}

export function App({ host }: { host: Host }) {
  const [history, setHistory] = useState<History<BeamlineDoc>>(() => historyStart(newDocument()));
  const [name, setName] = useState<string>(() => docName(newDocument()));
  const [path, setPath] = useState<string | undefined>();
  const [savedText, setSavedText] = useState<string | null>(null);
  const [key, setKey] = useState(draftKey);
  const [selected, setSelected] = useState<string | undefined>('oven');
  const [errors, setErrors] = useState<Record<string, { text: string; message: string }>>({});
  const [dark, setDark] = useState(() => window.matchMedia?.('(prefers-color-scheme: dark)').matches ?? false);
  const [zoom, setZoom] = useState(1);
  const [palette, setPalette] = useState(false);
  const [dialog, setDialog] = useState<DialogState | undefined>();
  const [samples, setSamples] = useState<SampleInfo[]>([]);
  const [recent, setRecent] = useState<RecentDocument[]>([]);
  const refreshRecent = useCallback(() => void host.recentDocuments().then(setRecent).catch(() => {}), [host]);
  const [epsText, setEpsText] = useState('1 %');
  const [notice, setNotice] = useState<string | undefined>();
  const doc = history.present;

  // ---------------------------------------------------------------- derived
  const parsed = useMemo(() => checkDocument(doc), [doc]);
  const lastLine = useRef<(ReturnType<typeof checkDocument> & { ok: true }) | undefined>(undefined);
  if (parsed.ok) lastLine.current = parsed;
  const good = parsed.ok ? parsed : lastLine.current!;
  const line = good.line;
  const text = useMemo(() => documentText(doc), [doc]);
  const dirty = savedText === null ? history.past.length > 0 : text !== savedText;
  const tree = useMemo(() => lineTree(doc), [doc]);
  const lost = useMemo(() => unreached(doc, tree), [doc, tree]);
  const placed = useMemo(() => placeElements(line).placed, [line]);
  const hyperfine = useMemo(() => lineIsHyperfine(line), [line]);
  const speciesNames = useMemo(() => {
    try {
      return librarySpeciesNames();
    } catch {
      return ['Ag', 'Rb-87', 'Rb-85', 'K-39', 'Na-23', 'Cs-133', 'H'];
    }
  }, []);
  const eps = parseEps(epsText);
  const cautionsOfSpecies = useMemo(() => speciesCautions(line), [line]);

  // ---------------------------------------------------------------- engine
  const [docSeq, setDocSeq] = useState(0);
  const [answer, setAnswer] = useState<{ seq: number; result?: RunResultView; error?: string; ms?: number }>({ seq: 0 });
  const [lastResult, setLastResult] = useState<{ seq: number; result: RunResultView; ms?: number } | undefined>();
  const [status, setStatus] = useState<EngineStatus>({ requested: 0, running: false, slow: false, progress: 0, cancelled: false });
  const client = useMemo(
    () =>
      createEngineClient(
        () => new Worker(new URL('../engine.worker.ts', import.meta.url), { type: 'module' }) as never,
        (a) => {
          setAnswer(a);
          if (a.result) setLastResult({ seq: a.seq, result: a.result, ms: a.ms });
        },
        setStatus,
      ),
    [],
  );
  useEffect(() => () => client.dispose(), [client]);
  const seqRef = useRef(0);
  const postedText = useRef<string | undefined>(undefined);
  /** Sends a document to the engine unless it is the one sent last; called at the edit itself so the
   *  run starts before React renders the edit. */
  const postDoc = useCallback(
    (next: BeamlineDoc) => {
      const t = documentText(next);
      if (t === postedText.current) return;
      postedText.current = t;
      const seq = ++seqRef.current;
      setDocSeq(seq);
      client.run(seq, t);
    },
    [client],
  );
  useEffect(() => postDoc(doc), [doc, postDoc]);
  const historyRef = useRef(history);
  historyRef.current = history;

  const result = lastResult?.result;
  const warnMap = useMemo(() => warningsByElement(result?.warnings ?? [], doc.elements.map((e) => e.id)), [result, doc]);
  const warned = useMemo(() => new Set(warnMap.keys()), [warnMap]);

  // ---------------------------------------------------------------- host
  useEffect(() => host.setDirty(dirty), [dirty, host]);
  useEffect(() => host.setTitle(`${dirty ? '• ' : ''}${doc.title || name} — Spinyard`), [dirty, doc.title, name, host]);
  useEffect(() => {
    if (!dirty) return;
    const t = setTimeout(() => void host.autosave(key, text, name).catch(() => {}), 1500);
    return () => clearTimeout(t);
  }, [dirty, text, key, name, host]);

  const load = useCallback((hd: HostDocument, fromSample = false): boolean => {
    const r = readDocument(hd.text);
    if (!r.ok) {
      setDialog({ kind: 'problems', title: `${hd.name} was not opened`, problems: r.problems });
      return false;
    }
    setHistory(historyStart(r.doc));
    setLastResult(undefined); // results of another document are not shown for this one
    postedText.current = undefined; // and this one runs even when its text equals the last one sent
    setName(hd.name);
    setPath(fromSample ? undefined : hd.path);
    setSavedText(fromSample ? null : documentText(r.doc));
    setKey(draftKey());
    setErrors({});
    setSelected('oven');
    if (r.warnings.length > 0) setNotice(`${hd.name}: ${r.warnings.map((w) => `${w.path}: ${w.message}`).join('; ')}`);
    else setNotice(undefined);
    return true;
  }, []);

  useEffect(() => {
    let live = true;
    void host.initialDocument().then((d) => live && d && load(d)).catch(() => {});
    refreshRecent();
    void host.listSamples().then((s) => live && setSamples(s)).catch((e) => live && setNotice(`Samples: ${(e as Error).message}`));
    void host.loadAutosave().then((drafts) => live && drafts.length > 0 && setDialog({ kind: 'recover', drafts })).catch(() => {});
    const ac = new AbortController();
    host.onOpenDocument((d) => load(d), ac.signal);
    return () => {
      live = false;
      ac.abort();
    };
  }, [host, load, refreshRecent]);

  // ---------------------------------------------------------------- edits
  /** Takes `next` when the document layer accepts it; else returns the problems (the document stays). */
  const propose = useCallback((next: BeamlineDoc): Problem[] | undefined => {
    const r = checkDocument(next);
    if (!r.ok) return r.problems;
    postDoc(next);
    setHistory((h) => historyPush(h, next));
    return undefined;
  }, [postDoc]);

  const fail = (title: string, message: string) => setDialog({ kind: 'message', title, text: message });

  const actions: InspectorActions = {
    commitQuantity(p: string, t: string, spec: FieldSpec) {
      const trimmed = t.trim();
      let value: unknown = trimmed;
      if (trimmed === '') {
        if (spec.type === 'quantity' && spec.optional) value = undefined;
        else {
          const message = 'a value is needed here';
          setErrors((e) => ({ ...e, [p]: { text: t, message } }));
          return message;
        }
      } else if (spec.type === 'quantity') {
        const q = checkQuantity(trimmed, spec.dim, p);
        if (!q.ok) {
          setErrors((e) => ({ ...e, [p]: { text: t, message: q.message } }));
          return q.message;
        }
        if (spec.dim === 'dimensionless' && /^[-+]?(\d+\.?\d*|\.\d+)(e[-+]?\d+)?$/i.test(trimmed)) value = Number(trimmed);
      }
      const r = editAt(doc, p, value);
      const problems = r.ok ? propose(r.doc) : [{ path: p, message: r.message }];
      if (problems) {
        const message = problemsFor(problems, p);
        setErrors((e) => ({ ...e, [p]: { text: t, message } }));
        return message;
      }
      setErrors((e) => {
        const { [p]: _gone, ...rest } = e;
        return rest;
      });
      return undefined;
    },
    setValue(p: string, value: unknown) {
      let v = value;
      if (p === 'oven.velocity') v = defaultVelocity(value as VelocityKind, getAt(doc, 'oven.velocity') as Record<string, unknown>);
      const r = editAt(doc, p, v);
      const problems = r.ok ? propose(r.doc) : [{ path: p, message: r.message }];
      const message = problems ? problemsFor(problems, p) : undefined;
      setErrors((e) => {
        const { [p]: _gone, ...rest } = e;
        return message ? { ...rest, [p]: { text: String(value), message } } : rest;
      });
      return message;
    },
    setSpecies(value: string) {
      const next: unknown = value === 'bare spin' ? { spin: '1/2', g: 2.00231930436, mass: '106.905 u' } : value;
      const r = editAt(doc, 'species', next);
      let candidate = r.ok ? r.doc : undefined;
      if (candidate && !checkDocument(candidate).ok) {
        // carry the port names over to the new species where the states correspond one to one
        const to = speciesPortLabels(next);
        const from = magnetPortLabels(line);
        const toHyperfine = to ? to.some((l) => l.startsWith('mJ=') || l.startsWith('F=')) : false;
        const els = to ? remapPorts(candidate.elements as never[], from, to, toHyperfine) : undefined;
        if (els) candidate = { ...candidate, elements: els };
      }
      if (candidate && lineIsHyperfineSpecies(next) && candidate.elements.some((e) => e.kind === 'magnet' && e.field === undefined)) {
        // a hyperfine species sorts by the eigenstates at the magnet's field: its size must be given
        const named = candidate.elements.filter((e) => e.kind === 'magnet' && e.field === undefined).map((e) => e.id);
        candidate = { ...candidate, elements: candidate.elements.map((e) => (e.kind === 'magnet' && e.field === undefined ? { ...e, field: DEFAULT_HYPERFINE_FIELD } : e)) };
        setNotice(`${named.join(', ')}: field set to ${DEFAULT_HYPERFINE_FIELD} (a hyperfine species needs the field size at the beam); enter your magnets' set-point.`);
      }
      const problems = candidate ? propose(candidate) : [{ path: 'species', message: r.ok ? '' : r.message }];
      const message = problems ? `${value} does not fit this line as it is: ${problemsFor(problems, 'species')}` : undefined;
      setErrors((e) => {
        const { species: _gone, ...rest } = e;
        return message ? { ...rest, species: { text: value, message } } : rest;
      });
      return message;
    },
    reroute(fromId, port, target) {
      const r = editReroute(doc, fromId, port, target);
      const problems = r.ok ? propose(r.doc) : [{ path: fromId, message: r.message }];
      if (problems) fail(`Cannot route ${fromId}${port ? ` ${port}` : ''} to ${target}`, problems.map((x) => `${x.path}: ${x.message}`).join('\n'));
    },
    addOnPort(fromId, port, kind) {
      const r = editAddOnPort(doc, line, fromId, port, kind as ElementKind);
      if (!r.ok) return fail(`Cannot add a ${kind}`, r.message);
      const problems = propose(r.doc);
      if (problems) fail(`Cannot add a ${kind}`, problems.map((x) => `${x.path}: ${x.message}`).join('\n'));
      else if (r.id) setSelected(r.id);
    },
    rename(oldId, newId) {
      const p = `elements[${doc.elements.findIndex((e) => e.id === oldId)}].id`;
      const r = editRename(doc, oldId, newId);
      const problems = r.ok ? propose(r.doc) : [{ path: p, message: r.message }];
      if (problems) {
        const message = problemsFor(problems, p);
        setErrors((e) => ({ ...e, [p]: { text: newId, message } }));
        return message;
      }
      setErrors((e) => {
        const { [p]: _gone, ...rest } = e;
        return rest;
      });
      setSelected(newId);
      return undefined;
    },
  };

  // ---------------------------------------------------------------- commands
  const order = useMemo(() => {
    const out: string[] = ['oven'];
    const walk = (items: ReturnType<typeof lineTree>) => {
      for (const it of items) {
        if (!it.shared) out.push(it.id);
        for (const p of it.ports ?? []) walk(p.branch);
      }
    };
    walk(tree);
    return [...out, ...lost];
  }, [tree, lost]);

  const api: AppApi = {
    doc, history, selected, samples,
    running: status.running,
    hasResult: result !== undefined,
    undo: () => {
      const h = historyUndo(historyRef.current);
      postDoc(h.present);
      setHistory(h);
      setErrors({});
    },
    redo: () => {
      const h = historyRedo(historyRef.current);
      postDoc(h.present);
      setHistory(h);
      setErrors({});
    },
    newDoc: async () => {
      if (await host.newWindow()) return;
      load({ name: 'untitled.spinyard', text: documentText(newDocument()) }, true);
      setName(docName(newDocument()));
    },
    open: async () => {
      try {
        const d = await host.openDocument();
        if (d) load(d);
        refreshRecent();
      } catch (e) {
        fail('Cannot open the file', (e as Error).message);
      }
    },
    save: async (saveAs) => {
      const t = documentText(doc);
      try {
        const r = await host.saveDocument({ name, text: t, ...(path ? { path } : {}), ...(saveAs ? { saveAs: true } : {}) });
        if (!r) return;
        setName(r.name);
        setPath(r.path);
        setSavedText(t);
        void host.clearAutosave(key).catch(() => {});
        setNotice(`Saved ${r.name}${r.path ? '' : ' (to the downloads)'}.`);
        refreshRecent();
      } catch (e) {
        fail('The document was not saved', (e as Error).message);
      }
    },
    openRecent: async (id) => {
      try {
        const d = await host.openRecent(id);
        if (d) load(d);
        else setNotice('That recent document is gone (or opened in another window).');
        refreshRecent();
      } catch (e) {
        fail('Cannot open the recent document', (e as Error).message);
      }
    },
    openSample: async (s) => {
      try {
        load(await host.readSample(s), true);
      } catch (e) {
        fail('Cannot open the sample', (e as Error).message);
      }
    },
    toggleDark: () => setDark((d) => !d),
    zoom: (step) => setZoom((z) => (step === 0 ? 1 : Math.min(2, Math.max(0.6, Math.round((z + step * 0.1) * 10) / 10)))),
    palette: () => setPalette(true),
    dialog: (d) => setDialog(d),
    deleteSelected: () => {
      if (!selected || selected === 'oven') return;
      const r = editDelete(doc, selected);
      if (!r.ok) return fail(`Cannot delete ${selected}`, r.message);
      const problems = propose(r.doc);
      if (problems) fail(`Cannot delete ${selected}`, problems.map((x) => `${x.path}: ${x.message}`).join('\n'));
      else setSelected('oven');
    },
    duplicateSelected: () => {
      if (!selected || selected === 'oven') return;
      const r = editDuplicate(doc, selected);
      if (!r.ok) return fail(`Cannot duplicate ${selected}`, r.message);
      const problems = propose(r.doc);
      if (problems) fail(`Cannot duplicate ${selected}`, problems.map((x) => `${x.path}: ${x.message}`).join('\n'));
      else if (r.id) setSelected(r.id);
    },
    moveSelected: (dm) => {
      if (!selected || selected === 'oven') return;
      const i = doc.elements.findIndex((e) => e.id === selected);
      const el = line.elements.find((e) => e.id === selected);
      if (i < 0 || !el) return;
      const next = moveGap(el.gap ?? 0, dm);
      if (next === undefined) return setNotice(`${selected} sits right at its upstream neighbour: its gap cannot shrink further.`);
      const r = editAt(doc, `elements[${i}].gap`, next);
      if (r.ok) propose(r.doc);
    },
    selectStep: (d) => {
      const k = order.indexOf(selected ?? 'oven');
      const next = order[Math.min(order.length - 1, Math.max(0, k + d))];
      setSelected(next);
      document.querySelector<HTMLElement>(`.tree [data-id="${CSS.escape(next)}"]`)?.focus();
    },
    cancelRun: () => client.cancel(),
    exportCsv: () => {
      if (!result || eps === undefined) return;
      const rows = portRows(result, dwellById(line.elements as never), eps);
      downloadText(name.replace(/\.spinyard$/i, '') + '-ports.csv', portRowsCsv(rows, eps), 'text/csv');
    },
    printSheet: async (pdf) => {
      const html = setupSheetHtml(doc, line, name);
      if (pdf) {
        const r = await host.exportPdf(html, name.replace(/\.spinyard$/i, '') + '-setup-sheet.pdf');
        if (r) setNotice(`Setup sheet written: ${r.path ?? r.name}`);
      } else if (!(await host.printSheet(html))) setNotice('The setup sheet was not printed.');
    },
    focusPane: (p) => {
      const el = document.querySelector<HTMLElement>(p === 'tree' ? '.tree [role="treeitem"]' : p === 'inspector' ? '.inspector input, .inspector select' : '.results');
      el?.focus();
    },
  };
  const apiRef = useRef(api);
  apiRef.current = api;
  const ctx: AppCtx = { app: api };

  const registry = useMemo(() => {
    const r = createRegistry<AppCtx>((id, e) => setDialog({ kind: 'message', title: `Command ${id} failed`, text: (e as Error).message ?? String(e) }));
    for (const c of buildCommands()) r.register(c);
    return r;
  }, []);
  const [, setRegVersion] = useState(0);
  useEffect(() => {
    registry.unregisterPrefix('samples.open.');
    for (const s of samples) {
      registry.register({ id: `samples.open.${s.name}`, label: `Open Sample: ${s.title ?? s.name}`, menu: 'Samples', perform: (c) => c.app.openSample(s.name) });
    }
    setRegVersion((v) => v + 1);
  }, [samples, registry]);
  useEffect(() => {
    registry.unregisterPrefix('recent.open.');
    for (const d of recent) {
      registry.register({ id: `recent.open.${d.id}`, label: `Open Recent: ${d.name}`, menu: 'File', perform: (c) => c.app.openRecent(d.id) });
    }
    setRegVersion((v) => v + 1);
  }, [recent, registry]);

  const run = useCallback((id: string) => registry.run(id, { app: apiRef.current }), [registry]);
  const isEnabled = (id: string) => registry.isEnabled(id, ctx);

  useEffect(() => {
    const ac = new AbortController();
    host.onMenuCommand((id) => {
      if (!run(id)) {
        const c = registry.get(id);
        setNotice(c ? `${c.label.replace(/….*$/, '')}: not available now.` : `The menu sent an unknown command "${id}".`);
      }
    }, ac.signal);
    const onKey = (e: KeyboardEvent) => {
      const cmd = registry.forKey(e, host.platform);
      if (!cmd) return;
      const t = e.target as HTMLElement | null;
      const typing = !!t && (t.tagName === 'INPUT' || t.tagName === 'TEXTAREA' || t.tagName === 'SELECT' || t.isContentEditable);
      if (typing && !cmd.global) return;
      if (palette && cmd.id !== 'edit.palette') return;
      e.preventDefault();
      run(cmd.id);
    };
    window.addEventListener('keydown', onKey);
    return () => {
      ac.abort();
      window.removeEventListener('keydown', onKey);
    };
  }, [host, registry, run, palette]);

  useEffect(() => {
    document.documentElement.dataset.theme = dark ? 'dark' : 'light';
  }, [dark]);
  useEffect(() => {
    document.documentElement.style.fontSize = `${zoom * 100}%`;
  }, [zoom]);

  const commands = registry.list();
  const engineError = answer.seq === docSeq ? answer.error : undefined;
  const errorMap = useMemo(() => warningsByElement(engineError ? engineError.split('\n') : [], doc.elements.map((e) => e.id)), [engineError, doc]);
  const warnedAll = errorMap.size > 0 ? new Set([...warned, ...errorMap.keys()]) : warned;
  const selWarnings = selected ? [...(errorMap.get(selected) ?? []).map((e) => `not run: ${e}`), ...(warnMap.get(selected) ?? [])] : [];
  const quad = result?.quadrature;
  return (
    <div className="app">
      <header className="topbar">
        <MenuBar commands={commands} ctx={ctx} platform={host.platform} run={run} isEnabled={isEnabled} />
        <div className="doc-title">
          <span className="doc-name" title={doc.title || name}>{doc.title || name}</span>
          <span className="doc-file">{name}{dirty ? ' · unsaved changes' : ''}</span>
        </div>
        <button type="button" className="theme-toggle" onClick={() => run('view.toggleDark')} aria-pressed={dark}>{dark ? 'Light' : 'Dark'} theme</button>
      </header>
      <Caution species={typeof doc.species === 'string' ? doc.species : undefined} extra={cautionsOfSpecies} />
      {notice && (
        <div className="notice" role="status">
          {notice} <button type="button" onClick={() => setNotice(undefined)} aria-label="Dismiss notice">×</button>
        </div>
      )}
      <main className="workspace">
        <Tree items={tree} unreached={lost} selected={selected} warned={warnedAll} onSelect={setSelected} />
        <div className="center">
          <section className="drawing" aria-label="Schematic">
            <Schematic line={line} result={result} selected={selected} onSelect={setSelected} warned={warnedAll} />
          </section>
          <Results line={line} result={result} resultSeq={lastResult?.seq ?? 0} docSeq={docSeq} error={answer.seq === docSeq ? answer.error : undefined}
            ms={lastResult?.ms} status={status} epsText={epsText} eps={eps} onEps={setEpsText} onCancel={() => run('results.cancel')}
            onCsv={() => run('results.exportCsv')} dark={dark} />
        </div>
        <Inspector doc={doc} line={line} selected={selected} errors={errors} warnings={selWarnings} placed={selected ? placed.get(selected) : undefined}
          portLabels={magnetPortLabels(line)} hyperfine={hyperfine} speciesNames={speciesNames} actions={actions} />
      </main>
      <footer className="statusline" role="status" aria-live="polite">
        <span>{status.running ? 'computing…' : lastResult ? `run ${lastResult.seq} in ${lastResult.ms !== undefined ? Math.round(lastResult.ms) : '?'} ms` : 'no run yet'}</span>
        <span>{quad ? (quad.nodes > 0 ? `quadrature: ${quad.nodes} nodes, error ${quad.error.toExponential(1)}${quad.method ? ` (${quad.method})` : ''}` : `quadrature: ${quad.method ?? 'none'}`) : result ? 'quadrature: not reported' : ''}</span>
        <span>{result ? `lost ${result.lost.toExponential(2)}` : ''}</span>
        <span>{result ? `${result.warnings.length} warning${result.warnings.length === 1 ? '' : 's'}` : ''}</span>
        <span>Ctrl+K: commands</span>
      </footer>
      {palette && <Palette commands={commands} platform={host.platform} isEnabled={isEnabled} run={run} close={() => setPalette(false)} />}
      {dialog && <AppDialog d={dialog} close={() => setDialog(undefined)} api={api} selected={selected} line={line} doc={doc} actions={actions}
        onRecover={(dr) => {
          if (load({ name: dr.name, text: dr.text, ...(dr.path ? { path: dr.path } : {}) })) {
            setSavedText(null);
            setHistory((h) => historyPush(historyStart(h.present), h.present));
          }
          void host.clearAutosave(dr.key).catch(() => {});
          setDialog(undefined);
        }}
        onDiscard={(dr) => {
          void host.clearAutosave(dr.key).catch(() => {});
          setDialog(undefined);
        }} />}
    </div>
  );
}

function AppDialog({ d, close, api, selected, doc, actions, onRecover, onDiscard }: {
  d: DialogState; close(): void; api: AppApi; selected?: string; line: unknown; doc: BeamlineDoc; actions: InspectorActions;
  onRecover(d: AutosaveDraft): void; onDiscard(d: AutosaveDraft): void;
}) {
  const outputs = useMemo(() => {
    const out: { fromId: string; port: string | null; target: string }[] = [{ fromId: 'oven', port: null, target: doc.oven.to }];
    for (const e of doc.elements) {
      if (e.kind === 'magnet') for (const [port, target] of Object.entries(e.ports)) out.push({ fromId: e.id, port, target });
      else if (e.kind !== 'detector') out.push({ fromId: e.id, port: null, target: e.to });
    }
    return out;
  }, [doc]);
  const first = Math.max(0, outputs.findIndex((o) => o.fromId === selected));
  const [which, setWhich] = useState(first);
  const [kind, setKind] = useState<string>('detector');
  const [target, setTarget] = useState<string>('stop');
  const outLabel = (o: (typeof outputs)[number]) => `${o.fromId}${o.port === null ? '' : ` port ${o.port}`} → ${o.target}`;
  switch (d.kind) {
    case 'about':
      return (
        <Dialog title="About Spinyard" onClose={close}>
          <p>Spinyard plans atomic-beam Stern–Gerlach lines: gradient magnets, spin rotators, field regions and detectors, with yields, rates,
            detector-plane positions and counting times from spin projection operators averaged over the beam&apos;s velocity distribution.</p>
          <p>It runs offline; every number comes from the engine on this machine.</p>
        </Dialog>
      );
    case 'readme':
      return (
        <Dialog title="Working with Spinyard" onClose={close}>
          <ul>
            <li>Select an element in the tree or the drawing; edit its set-points in the inspector. Quantities carry units (“250 T/m”, “3.5 cm”, “(pi/4) rad”). Enter commits.</li>
            <li>A refused entry keeps its message beside the field; the line and the results keep the last valid value.</li>
            <li>Ctrl+K lists every command; Ctrl+Z / Ctrl+Y undo and redo every edit.</li>
            <li>Samples open from the Samples menu; a new document starts from a small two-magnet line.</li>
          </ul>
        </Dialog>
      );
    case 'problems':
      return (
        <Dialog title={d.title} onClose={close}>
          <p>Nothing was changed. The file has these problems:</p>
          <ul className="problems">{d.problems.map((p, i) => <li key={i}><code>{p.path || '(file)'}</code>: {p.message}</li>)}</ul>
        </Dialog>
      );
    case 'message':
      return (
        <Dialog title={d.title} onClose={close}>
          <p className="pre">{d.text}</p>
        </Dialog>
      );
    case 'recover':
      return (
        <Dialog title="Recover unsaved work?" onClose={close}>
          <p>Spinyard found work that was not saved when it last closed:</p>
          <ul>
            {d.drafts.map((dr) => (
              <li key={dr.key}>
                {dr.name}, {new Date(dr.savedAt).toLocaleString()}{' '}
                <button type="button" onClick={() => onRecover(dr)}>Recover</button>{' '}
                <button type="button" onClick={() => onDiscard(dr)}>Discard</button>
              </li>
            ))}
          </ul>
        </Dialog>
      );
    case 'add':
      return (
        <Dialog title="Add an element on a port" onClose={close} actions={
          <button type="button" onClick={() => {
            const o = outputs[which];
            close();
            actions.addOnPort(o.fromId, o.port, kind);
          }}>Add</button>}>
          <label>Output <select value={which} onChange={(e) => setWhich(Number(e.target.value))}>
            {outputs.map((o, i) => <option key={i} value={i}>{outLabel(o)}</option>)}
          </select></label>{' '}
          <label>Kind <select value={kind} onChange={(e) => setKind(e.target.value)}>
            {NEW_ELEMENT_KINDS.map((k) => <option key={k} value={k}>{k}</option>)}
          </select></label>
          <p className="note">The new element takes the beam of that output and passes it on (a magnet starts with all its ports to a stop).</p>
        </Dialog>
      );
    case 'reroute':
      return (
        <Dialog title="Re-route a port" onClose={close} actions={
          <button type="button" onClick={() => {
            const o = outputs[which];
            close();
            actions.reroute(o.fromId, o.port, target);
          }}>Re-route</button>}>
          <label>Output <select value={which} onChange={(e) => setWhich(Number(e.target.value))}>
            {outputs.map((o, i) => <option key={i} value={i}>{outLabel(o)}</option>)}
          </select></label>{' '}
          <label>New target <select value={target} onChange={(e) => setTarget(e.target.value)}>
            {['stop', ...doc.elements.map((e) => e.id)].map((t) => <option key={t} value={t}>{t}</option>)}
          </select></label>
        </Dialog>
      );
  }
  void api;
  return null;
}
