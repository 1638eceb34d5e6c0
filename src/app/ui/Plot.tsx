// A plotly.js chart: draws `data`/`layout` with Plotly.react and exports PNG/SVG (Plotly.downloadImage).
// plotly.js is a chunk of its own (about 4.6 MB), imported when the first chart is drawn: the tree, the
// schematic and the tables of the first result appear without it, and the charts fill in when it arrives.
import { useEffect, useRef, useState } from 'react';
import type PlotlyApi from 'plotly.js-dist-min';

type Plotly = typeof PlotlyApi;

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
          return P.react(el, data, { height, autosize: true, ...layout }, {
            displaylogo: false,
            responsive: true,
            modeBarButtonsToRemove: ['toImage', 'sendDataToCloud', 'select2d', 'lasso2d'],
          }).then(() => {
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
  const save = (format: 'png' | 'svg') => {
    const el = ref.current;
    if (!el) return;
    void loadPlotly()
      .then((P) => P.downloadImage(el, { format, filename: fileName, width: 900, height: height + 60 }))
      .catch((e: unknown) => setFailed(`The chart cannot be exported: ${(e as Error).message ?? String(e)}.`));
  };
  return (
    <figure className="plot" aria-labelledby={`${id}-title`}>
      <figcaption>
        <span id={`${id}-title`}>{title}</span>
        <span className="plot-actions">
          <button type="button" onClick={() => save('png')} aria-label={`Export ${title} as PNG`}>PNG</button>
          <button type="button" onClick={() => save('svg')} aria-label={`Export ${title} as SVG`}>SVG</button>
        </span>
      </figcaption>
      {failed && <p className="note" role="alert">{failed}</p>}
      {/* the chart's height is kept while plotly.js loads, so nothing below moves when the chart arrives */}
      <div ref={ref} data-chart={id} className="plot-area" style={{ minHeight: height }} />
    </figure>
  );
}
