// The editor's commands (one registry shared by menus, shortcuts, the palette, host menus and tests)
// and the editor API they act on. Host menu ids (HOST_COMMANDS of src/host/contract.ts) are used as
// they are.
import type { SampleInfo, AutosaveDraft } from '../host/contract.ts';
import type { BeamlineDoc, Problem } from './core-adapter.ts';
import { canRedo, canUndo, redoLabel, undoLabel, type History } from './history.ts';
import type { Command, CommandChoice } from './commands.ts';
import { elementFields, VELOCITY_KINDS } from './fields.ts';
import { BARE_SPIN_CHOICE, type InspectorEdit } from './inspector-edit.ts';
import type { PlanEdit } from './plan-edit.ts';
import type { CostAsk } from './engine-protocol.ts';
import type { CostWhat } from './cost-ask.ts';

export interface AppCtx {
  app: AppApi;
}

/** What commands act on: the latest state and actions of the editor. */
export interface AppApi {
  doc: BeamlineDoc;
  history: History<BeamlineDoc>;
  selected?: string;
  running: boolean;
  hasResult: boolean;
  samples: readonly SampleInfo[];
  /** Names of the species library (the species choice offers them and "bare spin"). */
  speciesNames: readonly string[];
  /** The line's species has hyperfine structure (the magnets' group and entry apply). */
  hyperfine: boolean;
  /** An edit made in the inspector (the command `inspector.edit`): applied, or its message shown where it belongs. */
  edit(e: InspectorEdit): void;
  undo(): void;
  redo(): void;
  newDoc(): void;
  open(): Promise<void>;
  /** Saves; true once the document is in a file (false: cancelled or failed, with its message shown). */
  save(saveAs: boolean): Promise<boolean>;
  openSample(name: string): Promise<void>;
  openRecent(id: string): Promise<void>;
  toggleDark(): void;
  zoom(step: number | 0): void;
  palette(): void;
  dialog(d: DialogState): void;
  deleteSelected(): void;
  duplicateSelected(): void;
  moveSelected(dm: number): void;
  selectStep(d: number): void;
  cancelRun(): void;
  exportCsv(): void;
  /** Closes the window (the shell asks about unsaved work; a browser tab says how to close it). */
  close(): void;
  /** The setup sheet to the printer, or as a PDF file. */
  printSheet(pdf: boolean): Promise<void>;
  focusPane(name: 'tree' | 'inspector' | 'results'): void;
  /** Which planning panels are open. */
  panels: { readonly scan: boolean; readonly budget: boolean; readonly fit: boolean; readonly simulate: boolean };
  /** Opens a planning panel (and moves the focus to it), or closes it. */
  togglePanel(name: 'scan' | 'budget' | 'fit' | 'simulate'): void;
  /** An edit of the document's kept scans or tolerances (the command `plan.edit`); a refusal is shown in its panel. */
  planEdit(e: PlanEdit): void;
}

export type DialogState =
  | { kind: 'about' }
  | { kind: 'readme' }
  | { kind: 'problems'; title: string; problems: Problem[] }
  | { kind: 'message'; title: string; text: string }
  | { kind: 'add' }
  | { kind: 'reroute' }
  | { kind: 'recover'; drafts: AutosaveDraft[] }
  /** Unsaved work is about to be replaced (`what`: "opening bench-b.spinyard"): save it, discard it or cancel. */
  | { kind: 'unsaved'; name: string; what: string; save(): void; discard(): void; cancel(): void }
  /** The engine refused a run (or a planning tool's work) by its cost estimate: run it anyway, or not. */
  | { kind: 'cost'; what: CostWhat; cost: CostAsk; runAnyway(): void; dontRun(): void };

const STEP_M = 0.005;

/**
 * The inspector's edits with a few choices, as the palette offers them for `inspector.edit`: the species,
 * the oven's velocity distribution, and the choices and switches of the selected element. Quantities are
 * typed into the inspector itself.
 */
export function inspectorChoices(app: Pick<AppApi, 'doc' | 'selected' | 'speciesNames' | 'hyperfine'>): CommandChoice[] {
  const { doc } = app;
  const out: CommandChoice[] = [];
  const species = typeof doc.species === 'string' ? doc.species : BARE_SPIN_CHOICE;
  for (const v of [BARE_SPIN_CHOICE, ...app.speciesNames]) {
    if (v !== species) out.push({ label: `Set Species: ${v}`, arg: { kind: 'species', value: v } satisfies InspectorEdit });
  }
  const velocity = (doc.oven.velocity as { kind?: unknown }).kind;
  for (const k of VELOCITY_KINDS) {
    if (k !== velocity) out.push({ label: `Set Velocity Distribution: ${k}`, arg: { kind: 'value', path: 'oven.velocity', value: k } satisfies InspectorEdit });
  }
  const i = doc.elements.findIndex((e) => e.id === app.selected);
  if (i >= 0) {
    const el = doc.elements[i] as unknown as Record<string, unknown> & { id: string };
    for (const f of elementFields(el, app.hyperfine)) {
      const path = `elements[${i}].${f.key}`;
      if (f.type === 'choice') {
        for (const o of f.options) {
          if ((el[f.key] ?? '') === o) continue;
          out.push({ label: `Set ${el.id} ${f.label}: ${o === '' ? '(default)' : o}`, arg: { kind: 'value', path, value: o === '' ? undefined : o } satisfies InspectorEdit });
        }
      } else if (f.type === 'bool') {
        const on = el[f.key] === true;
        out.push({ label: `Set ${el.id} ${f.label}: ${on ? 'off' : 'on'}`, arg: { kind: 'value', path, value: !on } satisfies InspectorEdit });
      }
    }
  }
  return out;
}
const named = (verb: string, what: string) => (what ? `${verb} ${what}` : undefined);

/** Every command of the editor, in menu order. */
export function buildCommands(): Command<AppCtx>[] {
  const sel = (c: AppCtx) => c.app.selected !== undefined && c.app.selected !== 'oven';
  return [
    { id: 'file.new', label: 'New', menu: 'File', shortcut: 'CmdOrCtrl+N', perform: (c) => c.app.newDoc() },
    { id: 'file.open', label: 'Open…', menu: 'File', shortcut: 'CmdOrCtrl+O', perform: (c) => c.app.open() },
    { id: 'file.save', label: 'Save', menu: 'File', shortcut: 'CmdOrCtrl+S', global: true, perform: async (c) => void (await c.app.save(false)) },
    { id: 'file.saveAs', label: 'Save As…', menu: 'File', shortcut: 'CmdOrCtrl+Shift+S', global: true, perform: async (c) => void (await c.app.save(true)) },
    { id: 'file.print', label: 'Print Setup Sheet…', menu: 'File', shortcut: 'CmdOrCtrl+P', perform: (c) => c.app.printSheet(false) },
    { id: 'file.exportPdf', label: 'Export Setup Sheet as PDF…', menu: 'File', perform: (c) => c.app.printSheet(true) },
    { id: 'file.close', label: 'Close', menu: 'File', perform: (c) => c.app.close() },
    { id: 'edit.undo', label: 'Undo', menu: 'Edit', shortcut: 'CmdOrCtrl+Z', describe: (c) => named('Undo', undoLabel(c.app.history)), enabled: (c) => canUndo(c.app.history), perform: (c) => c.app.undo() },
    { id: 'edit.redo', label: 'Redo', menu: 'Edit', shortcut: 'Ctrl+Y', alternates: ['Ctrl+Shift+Z', 'Cmd+Shift+Z'], describe: (c) => named('Redo', redoLabel(c.app.history)), enabled: (c) => canRedo(c.app.history), perform: (c) => c.app.redo() },
    { id: 'edit.palette', label: 'Command Palette…', menu: 'Edit', shortcut: 'CmdOrCtrl+K', global: true, perform: (c) => c.app.palette() },
    // every edit of the inspector; the palette offers its choices (inspectorChoices)
    { id: 'inspector.edit', label: 'Edit in the Inspector', menu: 'Element', takesArg: true, choices: (c) => inspectorChoices(c.app), perform: (c, e) => c.app.edit(e as InspectorEdit) },
    { id: 'element.add', label: 'Add Element on a Port…', menu: 'Element', shortcut: 'Alt+A', perform: (c) => c.app.dialog({ kind: 'add' }) },
    { id: 'element.reroute', label: 'Re-route a Port…', menu: 'Element', shortcut: 'Alt+R', perform: (c) => c.app.dialog({ kind: 'reroute' }) },
    { id: 'element.duplicate', label: 'Duplicate Element', menu: 'Element', shortcut: 'CmdOrCtrl+D', enabled: sel, perform: (c) => c.app.duplicateSelected() },
    { id: 'element.delete', label: 'Delete Element', menu: 'Element', shortcut: 'Delete', enabled: sel, perform: (c) => c.app.deleteSelected() },
    { id: 'element.moveDownstream', label: 'Move Downstream 5 mm', menu: 'Element', shortcut: 'Alt+Shift+Right', enabled: sel, perform: (c) => c.app.moveSelected(STEP_M) },
    { id: 'element.moveUpstream', label: 'Move Upstream 5 mm', menu: 'Element', shortcut: 'Alt+Shift+Left', enabled: sel, perform: (c) => c.app.moveSelected(-STEP_M) },
    { id: 'element.next', label: 'Select Next Element', menu: 'Element', shortcut: 'Alt+Down', perform: (c) => c.app.selectStep(1) },
    { id: 'element.previous', label: 'Select Previous Element', menu: 'Element', shortcut: 'Alt+Up', perform: (c) => c.app.selectStep(-1) },
    { id: 'results.cancel', label: 'Cancel the Run', menu: 'Edit', shortcut: 'Alt+Escape', enabled: (c) => c.app.running, perform: (c) => c.app.cancelRun() },
    { id: 'results.exportCsv', label: 'Export Ports Table as CSV', menu: 'File', shortcut: 'CmdOrCtrl+Shift+E', enabled: (c) => c.app.hasResult, perform: (c) => c.app.exportCsv() },
    { id: 'view.focusTree', label: 'Go to the Line Tree', menu: 'View', shortcut: 'Alt+1', global: true, perform: (c) => c.app.focusPane('tree') },
    { id: 'view.focusInspector', label: 'Go to the Inspector', menu: 'View', shortcut: 'Alt+2', global: true, perform: (c) => c.app.focusPane('inspector') },
    { id: 'view.focusResults', label: 'Go to the Results', menu: 'View', shortcut: 'Alt+3', global: true, perform: (c) => c.app.focusPane('results') },
    { id: 'view.zoomIn', label: 'Zoom In', menu: 'View', shortcut: 'CmdOrCtrl+=', alternates: ['CmdOrCtrl+Plus'], global: true, perform: (c) => c.app.zoom(1) },
    { id: 'view.zoomOut', label: 'Zoom Out', menu: 'View', shortcut: 'CmdOrCtrl+-', global: true, perform: (c) => c.app.zoom(-1) },
    { id: 'view.zoomReset', label: 'Actual Size', menu: 'View', shortcut: 'CmdOrCtrl+0', global: true, perform: (c) => c.app.zoom(0) },
    { id: 'view.toggleDark', label: 'Toggle Dark Theme', menu: 'View', shortcut: 'CmdOrCtrl+Shift+D', global: true, perform: (c) => c.app.toggleDark() },
    { id: 'view.scanPanel', label: 'Scan Panel', menu: 'View', shortcut: 'Alt+S', describe: (c) => (c.app.panels.scan ? 'Close the Scan Panel' : 'Scan Panel…'), perform: (c) => c.app.togglePanel('scan') },
    { id: 'view.budgetPanel', label: 'Tolerance Budget Panel', menu: 'View', shortcut: 'Alt+B', describe: (c) => (c.app.panels.budget ? 'Close the Tolerance Budget Panel' : 'Tolerance Budget Panel…'), perform: (c) => c.app.togglePanel('budget') },
    { id: 'view.fitPanel', label: 'Fit Panel', menu: 'View', shortcut: 'Alt+T', describe: (c) => (c.app.panels.fit ? 'Close the Fit Panel' : 'Fit Panel…'), perform: (c) => c.app.togglePanel('fit') },
    { id: 'view.simulatePanel', label: 'Simulated Run Panel', menu: 'View', shortcut: 'Alt+M', describe: (c) => (c.app.panels.simulate ? 'Close the Simulated Run Panel' : 'Simulated Run Panel…'), perform: (c) => c.app.togglePanel('simulate') },
    // the planning panels' edits of the document's scans and tolerances and a fit's values (undoable like every edit)
    { id: 'plan.edit', label: 'Edit the Kept Scans and Tolerances', menu: 'Edit', takesArg: true, perform: (c, e) => c.app.planEdit(e as PlanEdit) },
    { id: 'help.about', label: 'About Spinyard', menu: 'Help', perform: (c) => c.app.dialog({ kind: 'about' }) },
    { id: 'help.readme', label: 'README', menu: 'Help', perform: (c) => c.app.dialog({ kind: 'readme' }) },
  ];
}

