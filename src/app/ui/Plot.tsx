// A plotly.js chart: draws `data`/`layout` with Plotly.react and exports PNG/SVG (Plotly.toImage) at a chosen
// size, always on the light palette.
// The chart's own toolbar (plotly's mode bar) keeps only the view controls, zoom, pan and reset: no
// button of it opens a page, sends the figure anywhere or downloads; the exports are the PNG and SVG
// buttons of the caption. The mode bar is one stop of the Tab order (arrow keys move along it).
// plotly.js is a chunk of its own (about 4.6 MB), imported when the first chart is drawn: the tree, the
// schematic and the tables of the first result appear without it, and the charts fill in when it arrives.
import { useEffect, useRef, useState } from 'react';
import type PlotlyApi from 'plotly.js-dist-min';

type Plotly = typeof PlotlyApi;
/** plotly's toImage (src/plot_api/to_image.js): a figure {data, layout} drawn off screen, as a data URL. */
type PlotlyToImage = { toImage(fig: { data: unknown[]; layout: Record<string, unknown> }, opts: { format: 'png' | 'svg'; width: number; height: number }): Promise<string> };

let loading: Promise<Plotly> | undefined;
let loaded: Plotly | undefined;

/** Resolves once the browser has painted a frame (or after 100 ms where no frame comes, as in a hidden window). */
function afterPaint(): Promise<void> {
  return new Promise((resolve) => {
    const timer = setTimeout(resolve, 100);
    requestAnimationFrame(() => setTimeout(() => {
      clearTimeout(timer);
      resolve();
    }, 0));
  });
}

/**
 * plotly.js, imported once; a failed import is tried again at the next call. The import starts after the
 * next paint: evaluating plotly.js keeps the page busy for a while, and the result that asked for the
 * first chart is shown first.
 */
export function loadPlotly(): Promise<Plotly> {
  loading ??= afterPaint().then(() => import('plotly.js-dist-min')).then(
    (m) => (loaded = m.default),
    (e: unknown) => {
      loading = undefined;
      throw e;
    },
  );
  return loading;
}

/** The mode bar's buttons, in one group: view controls only (the names are plotly's, src/components/modebar/buttons.js). */
export const MODEBAR_BUTTONS: readonly string[] = ['zoom2d', 'pan2d', 'zoomIn2d', 'zoomOut2d', 'autoScale2d', 'resetScale2d'];

/**
 * plotly's config for every chart. The mode bar is the explicit list above; the rest switches off each way
 * plotly has to reach its web service or leave the page, in the versions that know the key: the logo link,
 * the "Share chart" / "Edit in Chart Studio" / send-to-cloud buttons (showSendToCloud defaults to true in
 * plotly.js 4), the on-graph link, and the server they would go to. plotly ignores a key it does not know.
 */
export const PLOT_CONFIG: Readonly<Record<string, unknown>> = Object.freeze({
  displaylogo: false,
  showLink: false,
  showSendToCloud: false,
  showEditInChartStudio: false,
  sendData: false,
  plotlyServerURL: '',
  modeBarButtons: [[...MODEBAR_BUTTONS]],
  modeBarButtonsToRemove: ['toImage', 'sendDataToCloud', 'sendChartToCloud', 'editInChartStudio', 'downloadJson', 'select2d', 'lasso2d'],
  responsive: true,
});

const ROVING_KEYS = new Set(['ArrowRight', 'ArrowLeft', 'ArrowDown', 'ArrowUp', 'Home', 'End']);

/** The buttons of a chart's mode bar. */
function modebarButtons(el: HTMLElement): HTMLElement[] {
  return [...el.querySelectorAll<HTMLElement>('.modebar .modebar-btn')];
}

/**
 * Makes a chart's mode bar one stop of the Tab order (a toolbar with a roving tab index): the button at
 * `index` (the last one used) takes Tab, the others -1. Called after each draw, since plotly may rebuild it.
 */
export function rovingModebar(el: HTMLElement, title: string, index = Number(el.dataset.modebarIndex ?? 0)): void {
  const bar = el.querySelector<HTMLElement>('.modebar');
  const buttons = modebarButtons(el);
  if (!bar || buttons.length === 0) return;
  bar.setAttribute('role', 'toolbar');
  bar.setAttribute('aria-label', `${title}: zoom and pan`);
  const at = Math.min(Math.max(0, index), buttons.length - 1);
  el.dataset.modebarIndex = String(at);
  buttons.forEach((b, i) => (b.tabIndex = i === at ? 0 : -1));
}

/** Arrow keys, Home and End on a mode bar button move the focus along the bar; true when it moved. */
export function modebarKey(el: HTMLElement, title: string, target: EventTarget | null, key: string): boolean {
  if (!ROVING_KEYS.has(key)) return false;
  const buttons = modebarButtons(el);
  const i = buttons.indexOf(target as HTMLElement);
  if (i < 0) return false;
  const n = buttons.length;
  const next = key === 'Home' ? 0 : key === 'End' ? n - 1 : (i + (key === 'ArrowRight' || key === 'ArrowDown' ? 1 : -1) + n) % n;
  rovingModebar(el, title, next);
  buttons[next].focus();
  return true;
}

/**
 * The charts' two palettes (plotTheme of Results.tsx builds every chart's layout from them). An export is always
 * drawn on the light one: a figure for a report or a lab notebook is printed on white, whichever theme the app shows.
 */
export const PLOT_PALETTE = {
  light: { fg: '#1d2530', grid: '#d9dde2', paper: '#ffffff' },
  dark: { fg: '#d8dde3', grid: '#3a434f', paper: '#1f252d' },
} as const;

const DARK_TO_LIGHT: ReadonlyMap<string, string> = new Map([
  [PLOT_PALETTE.dark.fg, PLOT_PALETTE.light.fg],
  [PLOT_PALETTE.dark.grid, PLOT_PALETTE.light.grid],
  [PLOT_PALETTE.dark.paper, PLOT_PALETTE.light.paper],
]);

function lighten(v: unknown): unknown {
  if (typeof v === 'string') return DARK_TO_LIGHT.get(v.toLowerCase()) ?? v;
  if (Array.isArray(v)) return v.map(lighten);
  if (v && typeof v === 'object') return Object.fromEntries(Object.entries(v).map(([k, x]) => [k, lighten(x)]));
  return v;
}

/** A figure as exported: every colour of the dark palette replaced by its light counterpart, on an opaque white paper. */
export function lightFigure(data: readonly unknown[], layout: Record<string, unknown>): { data: unknown[]; layout: Record<string, unknown> } {
  const l = lighten(layout) as Record<string, unknown>;
  return { data: data.map(lighten), layout: { ...l, paper_bgcolor: PLOT_PALETTE.light.paper, plot_bgcolor: PLOT_PALETTE.light.paper } };
}

/** Export sizes in px: a slide, a page, a poster; or the chart as it is shown. */
export const EXPORT_SIZES = {
  small: { width: 800, height: 500 },
  page: { width: 1200, height: 800 },
  print: { width: 2400, height: 1600 },
} as const;
export type ExportSize = keyof typeof EXPORT_SIZES | 'shown';
/** The size last chosen, for every chart (a lab exports a set of figures at one size). */
let exportSize: ExportSize = 'page';

export interface PlotProps {
  id: string;
  title: string;
  data: unknown[];
  layout: Record<string, unknown>;
  /** Sequence number of the result drawn; written to data-seq once the chart has rendered it. */
  seq: number;
  fileName: string;
  height?: number;
  /** Draw after this many ms (0: at once), so the table and the first chart of a run paint first. */
  delayMs?: number;
}

export function Plot({ id, title, data, layout, seq, fileName, height = 260, delayMs = 0 }: PlotProps) {
  const ref = useRef<HTMLDivElement>(null);
  const drawn = useRef<string | undefined>(undefined);
  const [failed, setFailed] = useState<string | undefined>(undefined);
  const titleRef = useRef(title);
  titleRef.current = title;
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    // an unchanged figure (the velocity distribution after a roll edit, say) is not drawn again
    const key = JSON.stringify([data, layout, height]);
    if (key === drawn.current) {
      el.dataset.seq = String(seq);
      return;
    }
    let live = true;
    const draw = () =>
      void loadPlotly()
        .then((P) => {
          if (!live) return;
          setFailed(undefined);
          drawn.current = key;
          return P.react(el, data, { height, autosize: true, ...layout }, { ...PLOT_CONFIG }).then(() => {
            const gd = el as HTMLElement & { on?(event: string, fn: () => void): void; _spinyardRoving?: boolean };
            if (!gd._spinyardRoving && gd.on) {
              gd._spinyardRoving = true;
              gd.on('plotly_afterplot', () => rovingModebar(el, titleRef.current));
            }
            rovingModebar(el, titleRef.current);
            if (live) el.dataset.seq = String(seq);
          });
        })
        .catch((e: unknown) => {
          if (live) setFailed(`The chart cannot be drawn: the plotting library did not load (${(e as Error).message ?? String(e)}).`);
        });
    const timer = delayMs > 0 ? setTimeout(draw, delayMs) : undefined;
    if (delayMs <= 0) draw();
    return () => {
      live = false;
      clearTimeout(timer);
    };
  }, [data, layout, seq, height, delayMs]);
  useEffect(() => {
    const el = ref.current;
    return () => {
      if (el && loaded) loaded.purge(el);
    };
  }, []);
  const [size, setSize] = useState<ExportSize>(exportSize);
  const save = (format: 'png' | 'svg') => {
    const el = ref.current;
    if (!el) return;
    const { width, height: h } = size === 'shown' ? { width: Math.max(300, Math.round(el.clientWidth)), height: Math.round(height) } : EXPORT_SIZES[size];
    const fig = lightFigure(data, { height: h, autosize: false, ...layout, width });
    void loadPlotly()
      .then((P) => (P as unknown as PlotlyToImage).toImage(fig, { format, width, height: h }))
      .then((url: string) => {
        const a = document.createElement('a');
        a.href = url;
        a.download = `${fileName}.${format}`;
        document.body.appendChild(a);
        a.click();
        a.remove();
      })
      .catch((e: unknown) => setFailed(`The chart cannot be exported: ${(e as Error).message ?? String(e)}.`));
  };
  return (
    <figure className="plot" aria-labelledby={`${id}-title`}>
      <figcaption>
        <span id={`${id}-title`}>{title}</span>
        <span className="plot-actions">
          <select aria-label={`Size of the exported ${title}`} title="size of the exported image (px)" value={size} data-export-size style={{ fontSize: 11, maxWidth: '7.5em' }} onChange={(e) => {
            exportSize = e.target.value as ExportSize;
            setSize(exportSize);
          }}>
            {(Object.keys(EXPORT_SIZES) as ExportSize[]).concat('shown').map((k) => (
              <option key={k} value={k}>{k === 'shown' ? 'as shown' : `${EXPORT_SIZES[k as Exclude<ExportSize, 'shown'>].width}×${EXPORT_SIZES[k as Exclude<ExportSize, 'shown'>].height}`}</option>
            ))}
          </select>
          <button type="button" onClick={() => save('png')} aria-label={`Export ${title} as PNG`}>PNG</button>
          <button type="button" onClick={() => save('svg')} aria-label={`Export ${title} as SVG`}>SVG</button>
        </span>
      </figcaption>
      {failed && <p className="note" role="alert">{failed}</p>}
      {/* the chart's height is kept while plotly.js loads, so nothing below moves when the chart arrives */}
      <div ref={ref} data-chart={id} className="plot-area" style={{ minHeight: height }}
        onKeyDown={(e) => {
          if (ref.current && modebarKey(ref.current, title, e.target, e.key)) e.preventDefault();
        }}
        onFocus={(e) => {
          // a button clicked or reached keeps the Tab stop of the bar
          const i = ref.current ? modebarButtons(ref.current).indexOf(e.target as HTMLElement) : -1;
          if (i >= 0 && ref.current) rovingModebar(ref.current, title, i);
        }} />
    </figure>
  );
}
