import { describe, expect, it } from 'vitest';
import { cascadeFrom, clampWindowState, DEFAULT_WINDOW, MIN_HEIGHT, MIN_WIDTH, parseWindowState } from '../../../electron/main/window-state.ts';

const laptop = { x: 0, y: 0, width: 1440, height: 900 };
const external = { x: 1440, y: 0, width: 2560, height: 1440 };

describe('clampWindowState', () => {
  it('keeps a window that is on a display', () => {
    expect(clampWindowState({ x: 100, y: 80, width: 1200, height: 760, maximized: false }, [laptop])).toEqual({ x: 100, y: 80, width: 1200, height: 760, maximized: false });
  });
  it('keeps a window on a second display', () => {
    expect(clampWindowState({ x: 2000, y: 100, width: 1200, height: 800, maximized: true }, [laptop, external])).toEqual({ x: 2000, y: 100, width: 1200, height: 800, maximized: true });
  });
  it('centres a window whose display is gone on the primary display', () => {
    const s = clampWindowState({ x: 2000, y: 100, width: 1200, height: 800, maximized: false }, [laptop]);
    expect(s).toEqual({ x: 120, y: 50, width: 1200, height: 800, maximized: false });
  });
  it('shrinks a window larger than its display', () => {
    const s = clampWindowState({ x: 0, y: 0, width: 3000, height: 2000, maximized: false }, [laptop]);
    expect([s.width, s.height, s.x, s.y]).toEqual([1440, 900, 0, 0]);
  });
  it('pulls back a window sticking out past the right edge', () => {
    const s = clampWindowState({ x: 1000, y: 100, width: 1200, height: 700, maximized: false }, [laptop]);
    expect(s.x).toBe(1440 - 1200);
  });
  it('moves a window whose title bar is above the display down into it', () => {
    const s = clampWindowState({ x: 100, y: -30, width: 1000, height: 700, maximized: false }, [laptop]);
    expect(s.y).toBe(0);
  });
  it('raises sizes below the minimum', () => {
    const s = clampWindowState({ width: 200, height: 100, maximized: false }, [laptop]);
    expect([s.width, s.height]).toEqual([MIN_WIDTH, MIN_HEIGHT]);
  });
  it('centres a window with no stored position', () => {
    const s = clampWindowState({ ...DEFAULT_WINDOW }, [laptop]);
    expect(s.x).toBe((1440 - DEFAULT_WINDOW.width) / 2);
  });
});

describe('parseWindowState', () => {
  it('reads a stored state and rejects garbage', () => {
    expect(parseWindowState({ x: 1.4, y: 2, width: 900, height: 700, maximized: true })).toEqual({ x: 1, y: 2, width: 900, height: 700, maximized: true });
    expect(parseWindowState({ width: 'big' })).toEqual(DEFAULT_WINDOW);
    expect(parseWindowState(null)).toEqual(DEFAULT_WINDOW);
    expect(parseWindowState({ width: 900, height: 700 })).toEqual({ width: 900, height: 700, maximized: false });
  });
});

describe('cascadeFrom', () => {
  it('offsets the next window and wraps at the display edge', () => {
    expect(cascadeFrom({ x: 100, y: 100, width: 800, height: 600 }, laptop)).toEqual({ x: 128, y: 128, width: 800, height: 600 });
    expect(cascadeFrom({ x: 620, y: 290, width: 800, height: 600 }, laptop)).toEqual({ x: 28, y: 28, width: 800, height: 600 });
  });
});
