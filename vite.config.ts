// Web build of the renderer (index.html → dist-web). Relative base so the same build loads from
// 127.0.0.1 (npm run web) and from a file inside the Electron package; workers as ES modules.
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
    chunkSizeWarningLimit: 6000,
    sourcemap: false,
  },
  worker: { format: 'es' },
});
