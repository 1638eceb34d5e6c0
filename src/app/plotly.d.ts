// The part of plotly.js-dist-min the renderer uses (the package ships no types).
declare module 'plotly.js-dist-min' {
  export type PlotlyHTMLElement = HTMLElement;
  export function react(el: HTMLElement, data: unknown[], layout?: unknown, config?: unknown): Promise<PlotlyHTMLElement>;
  export function purge(el: HTMLElement): void;
  export function downloadImage(el: HTMLElement, opts: { format: 'png' | 'svg' | 'jpeg' | 'webp'; filename: string; width?: number; height?: number; scale?: number }): Promise<string>;
  export const Plots: { resize(el: HTMLElement): void };
  const Plotly: {
    react: typeof react;
    purge: typeof purge;
    downloadImage: typeof downloadImage;
    Plots: typeof Plots;
  };
  export default Plotly;
}
