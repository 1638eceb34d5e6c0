// The application menu as plain data, per platform. main.ts turns it into an Electron Menu: an item with
// `command` sends that id to the focused window's renderer (HOST_COMMANDS of src/host/contract.ts), an
// item with `action` is handled by main itself, an item with `role` is Electron's built-in behaviour.

import { HOST_COMMANDS, type RecentDocument, type SampleInfo } from '../../src/host/contract.ts';

/** What main handles itself: data-carrying items and app-level actions. */
export type MenuAction =
  | { kind: 'openRecent'; id: string }
  | { kind: 'clearRecent' }
  | { kind: 'openSample'; name: string };

export interface MenuItemSpec {
  label?: string;
  type?: 'separator' | 'submenu';
  accelerator?: string;
  /** Hidden items keep their accelerator working (a second key for the same command). */
  visible?: boolean;
  enabled?: boolean;
  command?: string;
  action?: MenuAction;
  role?: 'appMenu' | 'about' | 'services' | 'hide' | 'hideOthers' | 'unhide' | 'quit' | 'cut' | 'copy' | 'paste' | 'pasteAndMatchStyle' | 'delete' | 'selectAll' | 'minimize' | 'zoom' | 'front' | 'togglefullscreen' | 'toggleDevTools' | 'close' | 'window';
  submenu?: MenuItemSpec[];
}

export interface MenuInput {
  platform: string;
  appName: string;
  recent: readonly RecentDocument[];
  samples: readonly SampleInfo[];
  /** Show the developer tools item (unpackaged runs). */
  devTools?: boolean;
}

const SEP: MenuItemSpec = { type: 'separator' };

function cmd(id: string, platform: string, extra: Partial<MenuItemSpec> = {}): MenuItemSpec {
  const c = HOST_COMMANDS.find((x) => x.id === id);
  if (!c) throw new Error(`menu refers to unknown command ${id}`);
  const accelerator = platform === 'darwin' && c.macAccelerator ? c.macAccelerator : c.accelerator;
  return { label: c.label, command: id, ...(accelerator ? { accelerator } : {}), ...extra };
}

/** Hidden twins of a command for its alternate keys (Shift+Ctrl+Z beside Ctrl+Y for Redo, say). */
function alternates(id: string, platform: string, shown: string | undefined): MenuItemSpec[] {
  const c = HOST_COMMANDS.find((x) => x.id === id);
  return (c?.alternates ?? [])
    .filter((a) => a !== shown && !(platform === 'darwin' && a.replace('CmdOrCtrl', 'Cmd') === shown))
    .map((a) => ({ label: c!.label, command: id, accelerator: a, visible: false }));
}

/** The menu template for a platform: the darwin app menu, File, Edit, View, Samples, Window, Help. */
export function buildMenuTemplate(input: MenuInput): MenuItemSpec[] {
  const { platform, appName } = input;
  const mac = platform === 'darwin';
  const recentItems: MenuItemSpec[] =
    input.recent.length === 0
      ? [{ label: 'No Recent Documents', enabled: false }]
      : [
          ...input.recent.map((r) => ({ label: r.path ?? r.name, action: { kind: 'openRecent', id: r.id } as MenuAction })),
          SEP,
          { label: 'Clear Recent', action: { kind: 'clearRecent' } },
        ];
  const sampleItems: MenuItemSpec[] =
    input.samples.length === 0
      ? [{ label: 'No Samples Found', enabled: false }]
      : input.samples.map((s) => ({ label: s.title ? `${s.title} (${s.name})` : s.name, action: { kind: 'openSample', name: s.name } as MenuAction }));

  const redo = cmd('edit.redo', platform);
  const zoomIn = cmd('view.zoomIn', platform);

  const template: MenuItemSpec[] = [];
  if (mac) {
    template.push({
      label: appName,
      type: 'submenu',
      submenu: [
        cmd('help.about', platform, { label: `About ${appName}` }),
        SEP,
        { role: 'services' },
        SEP,
        { role: 'hide' },
        { role: 'hideOthers' },
        { role: 'unhide' },
        SEP,
        { role: 'quit', label: `Quit ${appName}` },
      ],
    });
  }
  template.push({
    label: mac ? 'File' : '&File',
    type: 'submenu',
    submenu: [
      cmd('file.new', platform),
      cmd('file.open', platform),
      { label: 'Open Recent', type: 'submenu', submenu: recentItems },
      SEP,
      cmd('file.save', platform),
      cmd('file.saveAs', platform),
      SEP,
      cmd('file.print', platform),
      cmd('file.exportPdf', platform),
      SEP,
      cmd('file.close', platform),
      ...(mac ? [] : [SEP, { role: 'quit', label: 'E&xit' } as MenuItemSpec]),
    ],
  });
  template.push({
    label: mac ? 'Edit' : '&Edit',
    type: 'submenu',
    submenu: [
      cmd('edit.undo', platform),
      redo,
      ...alternates('edit.redo', platform, redo.accelerator),
      SEP,
      { role: 'cut' },
      { role: 'copy' },
      { role: 'paste' },
      { role: 'delete' },
      { role: 'selectAll' },
    ],
  });
  template.push({
    label: mac ? 'View' : '&View',
    type: 'submenu',
    submenu: [
      zoomIn,
      ...alternates('view.zoomIn', platform, zoomIn.accelerator),
      cmd('view.zoomOut', platform),
      cmd('view.zoomReset', platform),
      SEP,
      cmd('view.toggleDark', platform),
      { role: 'togglefullscreen' },
      SEP,
      cmd('view.scanPanel', platform),
      cmd('view.budgetPanel', platform),
      cmd('view.fitPanel', platform),
      cmd('view.simulatePanel', platform),
      ...(input.devTools ? [SEP, { role: 'toggleDevTools' } as MenuItemSpec] : []),
    ],
  });
  template.push({ label: mac ? 'Samples' : '&Samples', type: 'submenu', submenu: sampleItems });
  if (mac) {
    template.push({ role: 'window', label: 'Window', type: 'submenu', submenu: [{ role: 'minimize' }, { role: 'zoom' }, SEP, { role: 'front' }] });
  }
  template.push({
    label: mac ? 'Help' : '&Help',
    type: 'submenu',
    submenu: [...(mac ? [] : [cmd('help.about', platform, { label: `About ${appName}` }), SEP]), cmd('help.readme', platform)],
  });
  return template;
}

/** Every command id and accelerator reachable in a template, depth first (for tests and checks). */
export function flattenMenu(items: readonly MenuItemSpec[]): MenuItemSpec[] {
  return items.flatMap((i) => [i, ...(i.submenu ? flattenMenu(i.submenu) : [])]);
}
