// A plotly.js chart: draws `data`/`layout` with Plotly.react and exports PNG/SVG (Plotly.downloadImage).
import { useEffect, useRef } from 'react';
import Plotly from 'plotly.js-dist-min';

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
  useEffect(() => {
    const el = ref.current;
    if (!el) return;
    // an unchanged figure (the velocity distribution after a roll edit, say) is not drawn again
    const key = JSON.stringify([data, layout, height]);
    if (key === drawn.current) {
      el.dataset.seq = String(seq);
      return;
    }
    drawn.current = key;
    let live = true;
    const draw = () =>
      void Plotly.react(el, data, { height, autosize: true, ...layout }, {
        displaylogo: false,
        responsive: true,
        modeBarButtonsToRemove: ['toImage', 'sendDataToCloud', 'select2d', 'lasso2d'],
      }).then(() => {
        if (live) el.dataset.seq = String(seq);
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
      if (el) Plotly.purge(el);
    };
  }, []);
  const save = (format: 'png' | 'svg') => {
    if (ref.current) void Plotly.downloadImage(ref.current, { format, filename: fileName, width: 900, height: height + 60 });
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
      <div ref={ref} data-chart={id} className="plot-area" />
    </figure>
  );
}
