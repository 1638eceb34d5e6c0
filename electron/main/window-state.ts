// Window size and position, restored at start and clamped so the window lands on a display that exists
// now (a laptop undocked from its external monitor must not open its window off screen).

export interface Rect {
  x: number;
  y: number;
  width: number;
  height: number;
}

export interface WindowState {
  x?: number;
  y?: number;
  width: number;
  height: number;
  maximized: boolean;
}

export const DEFAULT_WINDOW: WindowState = { width: 1280, height: 820, maximized: false };
export const MIN_WIDTH = 800;
export const MIN_HEIGHT = 560;
/** At least this much of the window (its title bar) must lie on a display. */
const VISIBLE_MARGIN = 64;

function overlap(a: Rect, b: Rect): { w: number; h: number } {
  const w = Math.min(a.x + a.width, b.x + b.width) - Math.max(a.x, b.x);
  const h = Math.min(a.y + a.height, b.y + b.height) - Math.max(a.y, b.y);
  return { w: Math.max(0, w), h: Math.max(0, h) };
}

function finite(n: unknown): n is number {
  return typeof n === 'number' && Number.isFinite(n);
}

/** A stored state read back from JSON, or the default when it is not one. */
export function parseWindowState(v: unknown): WindowState {
  if (typeof v !== 'object' || v === null) return { ...DEFAULT_WINDOW };
  const s = v as Record<string, unknown>;
  if (!finite(s.width) || !finite(s.height)) return { ...DEFAULT_WINDOW };
  const out: WindowState = { width: Math.round(s.width), height: Math.round(s.height), maximized: s.maximized === true };
  if (finite(s.x) && finite(s.y)) {
    out.x = Math.round(s.x);
    out.y = Math.round(s.y);
  }
  return out;
}

/**
 * The state to open a window with, given the work areas of the displays now attached (the first is the
 * primary). The size is cut to fit the display the window lands on and kept at least the minimum; a
 * position is kept only when the window's top strip (VISIBLE_MARGIN high, where the title bar is)
 * overlaps a display by at least VISIBLE_MARGIN pixels wide and half that high; otherwise the window is centred on the
 * primary display.
 */
export function clampWindowState(state: WindowState, displays: readonly Rect[]): WindowState {
  if (displays.length === 0) return { ...state };
  const fit = (d: Rect) => ({
    width: Math.max(Math.min(MIN_WIDTH, d.width), Math.min(Math.max(state.width, MIN_WIDTH), d.width)),
    height: Math.max(Math.min(MIN_HEIGHT, d.height), Math.min(Math.max(state.height, MIN_HEIGHT), d.height)),
  });
  if (state.x !== undefined && state.y !== undefined) {
    const top: Rect = { x: state.x, y: state.y, width: state.width, height: VISIBLE_MARGIN };
    const host = displays.find((d) => {
      const o = overlap(top, d);
      return o.w >= VISIBLE_MARGIN && o.h >= VISIBLE_MARGIN / 2;
    });
    if (host) {
      const { width, height } = fit(host);
      // Keep the window inside its display where it would stick out past an edge.
      const x = Math.min(Math.max(state.x, host.x), host.x + host.width - width);
      const y = Math.min(Math.max(state.y, host.y), host.y + host.height - height);
      return { x, y, width, height, maximized: state.maximized };
    }
  }
  const primary = displays[0];
  const { width, height } = fit(primary);
  return {
    x: Math.round(primary.x + (primary.width - width) / 2),
    y: Math.round(primary.y + (primary.height - height) / 2),
    width,
    height,
    maximized: state.maximized,
  };
}

/** The position for a further window: offset from the last one by a title bar's height, wrapping back
 *  to the display's corner when it would leave the display. */
export function cascadeFrom(last: Rect, display: Rect, step = 28): Rect {
  let x = last.x + step;
  let y = last.y + step;
  if (x + last.width > display.x + display.width || y + last.height > display.y + display.height) {
    x = display.x + step;
    y = display.y + step;
  }
  return { x, y, width: last.width, height: last.height };
}
