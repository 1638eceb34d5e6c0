// Web build of the renderer (index.html → dist-web). Relative base so the same build loads from
// 127.0.0.1 (npm run web) and from a file inside the Electron package; workers as ES modules.
// plotly.js is a chunk of its own (src/app/ui/Plot.tsx imports it when the first chart is drawn): the main
// chunk is about 0.8 MB, the engine worker's 0.46 MB, plotly's 4.6 MB. The size warning sits just above
// plotly's chunk, the one chunk that is large by design.
import { defineConfig } from 'vite';
import react from '@vitejs/plugin-react';

export default defineConfig({
  root: '.',
  base: './',
  plugins: [react()],
  publicDir: false,
  build: {
    outDir: 'dist-web',
    emptyOutDir: true,
    chunkSizeWarningLimit: 4800,
    sourcemap: false,
  },
  worker: { format: 'es' },
});
