// Builds the page (src/renderer) into dist/renderer for both shells.
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

export default defineConfig({
  root: fileURLToPath(new URL('./src/renderer', import.meta.url)),
  base: './',
  logLevel: 'warn',
  build: {
    outDir: fileURLToPath(new URL('./dist/renderer', import.meta.url)),
    emptyOutDir: true,
    target: 'es2022',
    // No inline scripts or styles: the Content-Security-Policy allows only our own files.
    assetsInlineLimit: 0,
    modulePreload: { polyfill: false },
  },
});
