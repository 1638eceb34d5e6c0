// The renderer: document state (a history of documents), the command registry, the engine worker and
// the panes (tree, schematic, inspector, results). An edit is validated once (checkDocument keeps the
// answer and the file text per document) and the worker gets the normalized line (engine-feed.ts).
import { formatValue, isRoundOff } from '../../beamline/numbers.ts';
import { useCallback, useEffect, useMemo, useRef, useState } from 'react';
import type { Host, HostDocument, SampleInfo, AutosaveDraft, RecentDocument } from '../../host/contract.ts';
import {
  checkDocument, documentHash, documentOutputs, documentText, editAt, editDelete, editDuplicate,
  lineIsHyperfine, librarySpeciesNames, lineParameters, magnetPortLabels, readDocument, speciesCautions, setupSheetHtml, type BeamlineDoc, type Problem,
} from '../core-adapter.ts';
import { historyPush, historyRedo, historyStart, historyUndo, type History } from '../history.ts';
import { buildCommands, type AppApi, type AppCtx, type DialogState } from '../app-commands.ts';
import { createRegistry } from '../commands.ts';
import { newDocument } from '../default-doc.ts';
import { lineTree, unreached } from '../line-tree.ts';
import { placeElements } from '../layout.ts';
import { dwellById, portRows, portRowsCsv, warningsByElement, type RunResultView } from '../results.ts';
import { createEngineClient, type EngineStatus } from '../engine-client.ts';
import { ACCEPTED_GROWTH, createEngineFeed } from '../engine-feed.ts';
import { NEW_ELEMENT_KINDS, type FieldSpec } from '../fields.ts';
import { documentDirty, parseEps, moveGap, problemsFor, type SavedState } from '../editing.ts';
import { applyPlanEdit, type PlanEdit } from '../plan-edit.ts';
import { scanPoolSize } from '../scan-blocks.ts';
import { asksFirst, costSentence, costTitle, type CostQuestion } from '../cost-ask.ts';
import type { EngineAnswer } from '../engine-client.ts';
import type { WorkerLike } from '../engine-client.ts';
import { applyInspectorEdit, type InspectorEdit } from '../inspector-edit.ts';
import { Tree } from './Tree.tsx';
import { Schematic } from './Schematic.tsx';
import { Inspector, type InspectorActions } from './Inspector.tsx';
import { Results } from './Results.tsx';
import { MenuBar } from './MenuBar.tsx';
import { Palette } from './Palette.tsx';
import { Dialog } from './Dialog.tsx';
import { Caution } from './Caution.tsx';
import { SkipLink } from './SkipLink.tsx';
import { ScanPanel } from './ScanPanel.tsx';
import { BudgetPanel } from './BudgetPanel.tsx';
import { FitPanel } from './FitPanel.tsx';
import { SimulatePanel } from './SimulatePanel.tsx';

/** A worker of the engine (the same module runs the live run and the planning requests). */
const makeEngineWorker = (): WorkerLike => new Worker(new URL('../engine.worker.ts', import.meta.url), { type: 'module' }) as never;
/** The workers a scan is spread over: one per core but one, at most 4, at least 1 (scan-blocks.ts). */
const PLAN_POOL = scanPoolSize(typeof navigator === 'undefined' ? undefined : navigator.hardwareConcurrency);

type ReadOk = ReturnType<typeof readDocument> & { ok: true };

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
  const [saved, setSaved] = useState<SavedState>({ kind: 'new' });
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
  /** The planning panels: open, and mounted once opened (a closed panel keeps its last result and takes no space). */
  const [panels, setPanels] = useState({ scan: false, budget: false, fit: false, simulate: false });
  const [mounted, setMounted] = useState({ scan: false, budget: false, fit: false, simulate: false });
  /** The message of the last plan edit the document refused (read by the panel that asked right after). */
  const planRefusal = useRef<string | undefined>(undefined);
  const doc = history.present;

  // ---------------------------------------------------------------- derived
  const parsed = useMemo(() => checkDocument(doc), [doc]);
  const lastLine = useRef<(ReturnType<typeof checkDocument> & { ok: true }) | undefined>(undefined);
  if (parsed.ok) lastLine.current = parsed;
  const good = parsed.ok ? parsed : lastLine.current!;
  const line = good.line;
  /** The file text of the document, as Save writes it (kept with the check: no serialization of its own). */
  const text = parsed.text;
  const dirty = documentDirty(saved, text, history.past.length);
  const dirtyRef = useRef(dirty);
  dirtyRef.current = dirty;
  const nameRef = useRef(name);
  nameRef.current = name;
  const keyRef = useRef(key);
  keyRef.current = key;
  const dialogRef = useRef(dialog);
  dialogRef.current = dialog;
  const modal = dialog !== undefined;
  /** A new dialog is a new Dialog (focus moves into it), also where one replaces another. */
  const dialogSeq = useRef({ of: dialog, n: 0 });
  if (dialogSeq.current.of !== dialog) dialogSeq.current = { of: dialog, n: dialogSeq.current.n + 1 };
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
  const [answer, setAnswer] = useState<EngineAnswer>({ seq: 0 });
  const [lastResult, setLastResult] = useState<{ seq: number; result: RunResultView; ms?: number } | undefined>();
  const [status, setStatus] = useState<EngineStatus>({ requested: 0, running: false, slow: false, progress: 0, cancelled: false });
  /** The run whose refusal by the engine's cost estimate the user answered "Don't run" (or was not asked about). */
  const [notRun, setNotRun] = useState<number | undefined>();
  /** A refusal by the cost estimate: asks "Run anyway" (set below, once the feed exists). */
  const onRunCost = useRef<(a: EngineAnswer) => void>(() => {});
  const client = useMemo(
    () =>
      createEngineClient(
        makeEngineWorker,
        (a) => {
          setAnswer(a);
          if (a.result) setLastResult({ seq: a.seq, result: a.result, ms: a.ms });
          if (asksFirst(a.cost)) onRunCost.current(a);
        },
        setStatus,
      ),
    [],
  );
  useEffect(() => () => client.dispose(), [client]);
  /** Sends a document's line to the engine unless it is the one sent last; called at the edit itself so
   *  the run starts before React renders the edit. */
  const feed = useMemo(() => createEngineFeed((seq, l, accept) => client.run(seq, l, accept), setDocSeq), [client]);
  const postDoc = useCallback((next: BeamlineDoc) => void feed.send(next), [feed]);
  /** Runs the line refused by its cost estimate anyway (with the usual progress and Cancel). */
  const runAnyway = useCallback(() => {
    setNotRun(undefined);
    feed.runAnyway();
  }, [feed]);
  /** Asks whether to run work the engine refused by its cost estimate; "Don't run" calls `dontRun`. A question that
   *  would replace another dialog is not asked: `dontRun` at once (the refusal's message stays where it is shown). */
  const askCost = useCallback((q: CostQuestion, dontRun?: () => void) => {
    if (dialogRef.current) {
      dontRun?.();
      return;
    }
    setDialog({
      kind: 'cost', what: q.what, cost: q.cost,
      runAnyway: () => {
        setDialog(undefined);
        q.runAnyway();
      },
      dontRun: () => {
        setDialog(undefined);
        dontRun?.();
      },
    });
  }, []);
  onRunCost.current = (a) => askCost({ what: 'run', cost: a.cost!, runAnyway }, () => setNotRun(a.seq));
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

  /** Puts a document that was read (`r`, from `hd`) in the window; no question asked (openIn asks). */
  const install = useCallback((hd: HostDocument, r: ReadOk, fromSample: boolean) => {
    setHistory(historyStart(r.doc));
    setLastResult(undefined); // results of another document are not shown for this one
    feed.reset(); // and this one runs even when its text equals the last one sent
    setName(hd.name);
    setPath(fromSample ? undefined : hd.path);
    setSaved(fromSample ? { kind: 'new' } : { kind: 'saved', text: checkDocument(r.doc).text }); // checked here once, for the view and the engine too
    setKey(draftKey());
    setErrors({});
    setSelected('oven');
    if (r.warnings.length > 0) setNotice(`${hd.name}: ${r.warnings.map((w) => `${w.path}: ${w.message}`).join('; ')}`);
    else setNotice(undefined);
  }, [feed]);

  /**
   * The one way a command replaces the document in the window (New, Open, a sample, a recent document,
   * a document the shell sends, a recovered draft): `replace` runs at once when nothing is unsaved; else
   * the user is asked, as the shell asks when the window closes: Save (then `replace`, once the save went
   * through), Don't Save (the draft of the work is dropped) or Cancel (the document and any dialog it
   * interrupted stay). `what` names the replacement: "opening bench-b.spinyard".
   */
  const replaceDocument = useCallback((what: string, replace: () => void) => {
    if (!dirtyRef.current) {
      replace();
      return;
    }
    const interrupted = dialogRef.current;
    setDialog({
      kind: 'unsaved', name: nameRef.current, what,
      save: () => {
        setDialog(undefined);
        void apiRef.current.save(false).then((ok) => ok && replace());
      },
      discard: () => {
        void host.clearAutosave(keyRef.current).catch(() => {});
        setDialog(undefined);
        replace();
      },
      cancel: () => setDialog(interrupted),
    });
  }, [host]);

  /**
   * Opens `hd` in this window: a document the reader refuses is reported and nothing is asked or
   * replaced; else replaceDocument asks about unsaved work first. `then` runs once it is in.
   */
  const openIn = useCallback((what: string, hd: HostDocument, fromSample = false, then?: () => void) => {
    const r = readDocument(hd.text);
    if (!r.ok) {
      setDialog({ kind: 'problems', title: `${hd.name} was not opened`, problems: r.problems });
      return;
    }
    replaceDocument(what, () => {
      install(hd, r, fromSample);
      then?.();
    });
  }, [install, replaceDocument]);

  useEffect(() => {
    let live = true;
    void host.initialDocument().then((d) => live && d && openIn(`opening ${d.name}`, d)).catch(() => {});
    refreshRecent();
    void host.listSamples().then((s) => live && setSamples(s)).catch((e) => live && setNotice(`Samples: ${(e as Error).message}`));
    void host.loadAutosave().then((drafts) => live && drafts.length > 0 && setDialog({ kind: 'recover', drafts })).catch(() => {});
    const ac = new AbortController();
    host.onOpenDocument((d) => openIn(`opening ${d.name}`, d), ac.signal);
    return () => {
      live = false;
      ac.abort();
    };
  }, [host, openIn, refreshRecent]);

  // ---------------------------------------------------------------- edits
  /** Takes `next` when the document layer accepts it, with `label` for Undo and Redo; else returns the
   *  problems (the document stays). */
  const propose = useCallback((next: BeamlineDoc, label: string): Problem[] | undefined => {
    const r = checkDocument(next);
    if (!r.ok) return r.problems;
    postDoc(next);
    setHistory((h) => historyPush(h, next, { label }));
    return undefined;
  }, [postDoc]);
  /** The validation an inspector edit asks for (the answer is kept with the document, so taking it costs nothing more). */
  const check = useCallback((next: BeamlineDoc) => {
    const r = checkDocument(next);
    return r.ok ? undefined : r.problems;
  }, []);

  const fail = (title: string, message: string) => setDialog({ kind: 'message', title, text: message });

  /** Applies an inspector edit (the command inspector.edit): takes the document or shows the message. */
  const edit = (e: InspectorEdit) => {
    const r = applyInspectorEdit(doc, line, e, check);
    if (r.ok) propose(r.doc, r.label);
    const field = r.field;
    if (field !== undefined) {
      setErrors((errs) => {
        const { [field]: _gone, ...rest } = errs;
        return r.ok ? rest : { ...rest, [field]: { text: r.text ?? '', message: r.message } };
      });
    }
    if (!r.ok) {
      if (r.title) fail(r.title, r.message);
      return;
    }
    if (r.select) setSelected(r.select);
    if (r.notice) setNotice(r.notice);
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
    doc, history, selected, samples, speciesNames, hyperfine, edit,
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
      openIn('starting a new document', { name: 'untitled.spinyard', text: documentText(newDocument()) }, true, () => setName(docName(newDocument())));
    },
    open: async () => {
      try {
        const d = await host.openDocument();
        if (d) openIn(`opening ${d.name}`, d);
        refreshRecent();
      } catch (e) {
        fail('Cannot open the file', (e as Error).message);
      }
    },
    save: async (saveAs) => {
      const t = text;
      try {
        const r = await host.saveDocument({ name, text: t, ...(path ? { path } : {}), ...(saveAs ? { saveAs: true } : {}) });
        if (!r) return false;
        setName(r.name);
        setPath(r.path);
        setSaved({ kind: 'saved', text: t });
        void host.clearAutosave(key).catch(() => {});
        setNotice(`Saved ${r.name}${r.path ? '' : ' (to the downloads)'}.`);
        refreshRecent();
        return true;
      } catch (e) {
        fail('The document was not saved', (e as Error).message);
        return false;
      }
    },
    openRecent: async (id) => {
      try {
        const d = await host.openRecent(id);
        if (d) openIn(`opening ${d.name}`, d);
        else setNotice('That recent document is gone (or opened in another window).');
        refreshRecent();
      } catch (e) {
        fail('Cannot open the recent document', (e as Error).message);
      }
    },
    openSample: async (s) => {
      try {
        const d = await host.readSample(s);
        openIn(`opening the sample ${d.name}`, d, true);
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
      const problems = propose(r.doc, `delete ${selected}`);
      if (problems) fail(`Cannot delete ${selected}`, problems.map((x) => `${x.path}: ${x.message}`).join('\n'));
      else setSelected('oven');
    },
    duplicateSelected: () => {
      if (!selected || selected === 'oven') return;
      const r = editDuplicate(doc, selected);
      if (!r.ok) return fail(`Cannot duplicate ${selected}`, r.message);
      const problems = propose(r.doc, `duplicate ${selected}`);
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
      if (r.ok) propose(r.doc, `move ${selected} ${dm > 0 ? 'downstream' : 'upstream'} ${Math.abs(dm * 1e3)} mm`);
    },
    selectStep: (d) => {
      const k = order.indexOf(selected ?? 'oven');
      const next = order[Math.min(order.length - 1, Math.max(0, k + d))];
      setSelected(next);
      document.querySelector<HTMLElement>(`.tree [data-id="${CSS.escape(next)}"]`)?.focus();
    },
    cancelRun: () => client.cancel(),
    close: () => {
      window.close(); // Electron: the shell's close, with its question about unsaved work
      // a browser closes only a tab a script opened: say how this one closes (its own prompt guards unsaved work)
      if (host.kind === 'browser') setTimeout(() => !window.closed && setNotice('Close this tab in the browser to close Spinyard; the browser asks first if anything is unsaved.'), 200);
    },
    exportCsv: async () => {
      if (!result || eps === undefined) return;
      // the CSV names the document and its hash: only a result of the document as it is now may carry them
      if (lastResult?.seq !== docSeq) {
        setNotice('The ports table is still being computed for the latest edit: export it once the run has finished.');
        return;
      }
      const rows = portRows(result, dwellById(line.elements as never), eps);
      try {
        const r = await host.saveTextFile({ name: `${name.replace(/\.spinyard$/i, '')}-ports.csv`, text: portRowsCsv(rows, eps, { name, sha256: documentHash(good.doc) }) });
        if (r) setNotice(`Ports table written: ${r.path ?? `${r.name} (to the downloads)`}`);
      } catch (e) {
        fail('The ports table was not saved', (e as Error).message);
      }
    },
    printSheet: async (pdf) => {
      const html = setupSheetHtml(doc, line, name);
      if (pdf) {
        const r = await host.exportPdf(html, name.replace(/\.spinyard$/i, '') + '-setup-sheet.pdf');
        if (r) setNotice(`Setup sheet written: ${r.path ?? r.name}`);
      } else if (!(await host.printSheet(html))) setNotice('The setup sheet was not printed.');
    },
    panels,
    togglePanel: (name) => {
      const open = !panels[name];
      setPanels((ps) => ({ ...ps, [name]: open }));
      if (open) {
        setMounted((m) => ({ ...m, [name]: true }));
        setTimeout(() => {
          const h = document.querySelector<HTMLElement>(`[data-panel="${name}"] h2`);
          h?.focus();
          h?.scrollIntoView({ block: 'start' });
        }, 0);
      }
    },
    planEdit: (e: PlanEdit) => {
      const r = applyPlanEdit(doc, e);
      if (!r.ok) {
        planRefusal.current = r.message;
        return;
      }
      const problems = propose(r.doc, r.label);
      const where = e.kind === 'keepScan' || e.kind === 'dropScan' ? 'scans' : e.kind === 'applyFit' ? '' : e.kind === 'keepFit' ? 'fits' : e.kind === 'keepSimulation' ? 'simulations' : 'tolerances';
      planRefusal.current = problems ? problemsFor(problems, 'index' in e ? `${where}[${e.index}]` : where) : undefined;
    },
    focusPane: (p) => {
      const q = (sel: string) => document.querySelector<HTMLElement>(sel);
      const el = p === 'tree' ? q('.tree [role="treeitem"][aria-selected="true"]') ?? q('.tree [role="treeitem"]') : q(p === 'inspector' ? '.inspector input, .inspector select' : '.results');
      if (el && el.tabIndex < 0 && !el.hasAttribute('tabindex')) el.tabIndex = -1; // a section takes the focus only with a tab index
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

  const run = useCallback((id: string, arg?: unknown) => registry.run(id, { app: apiRef.current }, arg), [registry]);
  /** The inspector's controls, each an edit run through the registry like every other command. */
  const actions: InspectorActions = useMemo(() => {
    const ed = (e: InspectorEdit) => void run('inspector.edit', e);
    return {
      commitQuantity: (path: string, text: string, spec: FieldSpec) => ed({ kind: 'quantity', path, text, spec }),
      setValue: (path: string, value: unknown) => ed({ kind: 'value', path, value }),
      setSpecies: (value: string) => ed({ kind: 'species', value }),
      rename: (from: string, to: string) => ed({ kind: 'rename', from, to }),
      reroute: (fromId: string, port: string | null, target: string) => ed({ kind: 'reroute', fromId, port, target }),
      addOnPort: (fromId: string, port: string | null, elementKind: string) => ed({ kind: 'addOnPort', fromId, port, elementKind }),
      setOvenState: (state, what) => ed({ kind: 'ovenState', state, what }),
      setVelocityTable: (points, source) => ed({ kind: 'velocityTable', points, source }),
      velocityRows: (op) => ed({ kind: 'velocityRows', op }),
      setPosition: (id, text, upstreamExit, upstreamName) => ed({ kind: 'position', id, text, upstreamExit, upstreamName }),
    };
  }, [run]);
  const isEnabled = (id: string) => registry.isEnabled(id, ctx);
  /** A plan edit through the registry; the refusal's message, or undefined when the document took it. */
  const planEdit = useCallback((e: PlanEdit): string | undefined => {
    planRefusal.current = undefined;
    run('plan.edit', e);
    return planRefusal.current;
  }, [run]);
  const params = useMemo(() => (mounted.scan || mounted.budget || mounted.fit ? lineParameters(good.text) : []), [mounted.scan, mounted.budget, mounted.fit, good.text]);
  const fileBase = name.replace(/\.spinyard$/i, '');

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
      if (modal) return; // a dialog is open: its own keys only
      e.preventDefault();
      run(cmd.id);
    };
    window.addEventListener('keydown', onKey);
    return () => {
      ac.abort();
      window.removeEventListener('keydown', onKey);
    };
  }, [host, registry, run, palette, modal]);

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
  const quadText = quad ? (quad.nodes > 0 ? `quadrature: ${quad.nodes} nodes, error ${formatValue(quad.error, 2)}${quad.method ? ` (${quad.method})` : ''}` : `quadrature: ${quad.method ?? 'none'}`) : result ? 'quadrature: not reported' : '';
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
          {mounted.scan && (
            <ScanPanel key={`ScanPanel-${key}`} hidden={!panels.scan} doc={good.doc} line={line} text={good.text} params={params} dark={dark} fileBase={fileBase}
              makeWorker={makeEngineWorker} poolSize={PLAN_POOL} onCost={askCost} onClose={() => run('view.scanPanel')}
              onKeep={(scan) => {
                const m = planEdit({ kind: 'keepScan', scan });
                if (m) fail('The scan was not kept', m);
              }}
              onDrop={(index) => {
                const m = planEdit({ kind: 'dropScan', index });
                if (m) fail('The scan was not removed', m);
              }}
              onCsv={(fname, csv) => void host.saveTextFile({ name: fname, text: csv }).then(
                (r) => r && setNotice(`Scan written: ${r.path ?? `${r.name} (to the downloads)`}`),
                (e: unknown) => fail('The scan was not saved', (e as Error).message),
              )} />
          )}
          {mounted.budget && (
            <BudgetPanel key={`BudgetPanel-${key}`} hidden={!panels.budget} doc={good.doc} text={good.text} params={params} makeWorker={makeEngineWorker} poolSize={PLAN_POOL} onCost={askCost}
              onClose={() => run('view.budgetPanel')}
              onAdd={(tolerance) => planEdit({ kind: 'addTolerance', tolerance })}
              onSet={(index, tolerance) => planEdit({ kind: 'setTolerance', index, tolerance })}
              onRemove={(index) => planEdit({ kind: 'removeTolerance', index })} />
          )}
          {mounted.fit && (
            <FitPanel key={`FitPanel-${key}`} hidden={!panels.fit} text={good.text} params={params} kept={good.doc.fits ?? []} dark={dark} fileBase={fileBase} makeWorker={makeEngineWorker} onCost={askCost}
              onClose={() => run('view.fitPanel')} onApply={(fit) => planEdit({ kind: 'applyFit', fit })} onKeep={(fit) => planEdit({ kind: 'keepFit', fit })} />
          )}
          {mounted.simulate && (
            <SimulatePanel key={`SimulatePanel-${key}`} hidden={!panels.simulate} text={good.text} kept={good.doc.simulations ?? []} dark={dark} fileBase={fileBase} makeWorker={makeEngineWorker} onCost={askCost}
              onClose={() => run('view.simulatePanel')} onKeep={(simulation) => planEdit({ kind: 'keepSimulation', simulation })} />
          )}
          <SkipLink label="Skip the results: go to the inspector" onActivate={() => run('view.focusInspector')} />
          <Results line={line} result={result} resultSeq={lastResult?.seq ?? 0} docSeq={docSeq} error={answer.seq === docSeq ? answer.error : undefined}
            notRun={notRun === docSeq && answer.seq === docSeq && answer.cost ? costSentence('run', answer.cost.estimate) : undefined} onRunAnyway={runAnyway}
            ms={lastResult?.ms} status={status} epsText={epsText} eps={eps} onEps={setEpsText} onCancel={() => run('results.cancel')}
            onCsv={() => run('results.exportCsv')} dark={dark} />
        </div>
        <Inspector doc={doc} line={line} selected={selected} errors={errors} warnings={selWarnings} placed={selected ? placed.get(selected) : undefined}
          portLabels={magnetPortLabels(line)} portLabelsOf={(g) => magnetPortLabels(line, g)} hyperfine={hyperfine} speciesNames={speciesNames} actions={actions}
          dark={dark} seq={lastResult?.seq ?? 0} />
      </main>
      <footer className="statusline" role="status" aria-live="polite">
        <span>{status.running ? 'computing…' : lastResult ? `run ${lastResult.seq} in ${lastResult.ms !== undefined ? Math.round(lastResult.ms) : '?'} ms` : 'no run yet'}</span>
        <span className="status-quad" title={quadText}>{quadText}</span>
        <span>{result ? `lost ${formatValue(isRoundOff(result.lost) ? 0 : result.lost, 3)}` : ''}</span>
        <span>{result ? `${result.warnings.length} warning${result.warnings.length === 1 ? '' : 's'}` : ''}</span>
        <span>Ctrl+K: commands</span>
      </footer>
      {palette && <Palette entries={registry.entries(ctx)} platform={host.platform} isEnabled={isEnabled} run={run} close={() => setPalette(false)} />}
      {dialog && <AppDialog key={dialogSeq.current.n} d={dialog} close={() => setDialog(undefined)} api={api} selected={selected} line={line} doc={doc} actions={actions}
        onRecover={(dr) => openIn(`recovering ${dr.name}`, { name: dr.name, text: dr.text, ...(dr.path ? { path: dr.path } : {}) }, false, () => {
          // the recovered work is in no file: it stays unsaved (the window's mark, the close prompt, autosave)
          setSaved({ kind: 'recovered' });
          void host.clearAutosave(dr.key).catch(() => {});
          setDialog(undefined);
        })}
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
  const outputs = useMemo(() => documentOutputs(doc), [doc]);
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
    case 'unsaved':
      return (
        <Dialog title={`Save the changes to ${d.name} before ${d.what}?`} onClose={d.cancel} closeLabel="Cancel" alert actions={<>
          <button type="button" onClick={d.save}>Save</button>
          <button type="button" onClick={d.discard}>Don&apos;t Save</button>
        </>}>
          <p>Changes not saved are lost when another document replaces this one.</p>
        </Dialog>
      );
    case 'cost':
      return (
        <Dialog title={costTitle(d.what)} onClose={d.dontRun} closeLabel="Don't run" alert actions={
          <button type="button" onClick={d.runAnyway}>Run anyway</button>}>
          <p data-cost-sentence>{costSentence(d.what, d.cost.estimate)}</p>
          <p className="note">{d.what === 'run'
            ? `Run anyway starts it with progress and Cancel, and later edits of this document run without asking until the estimate grows ${ACCEPTED_GROWTH}-fold; Don't run keeps this message in the results pane instead of results.`
            : 'Run anyway starts it with progress and Cancel; Don\'t run keeps this message in the panel.'}</p>
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
