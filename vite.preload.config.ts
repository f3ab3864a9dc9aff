// Builds the desktop bridge (src/main/preload.cts) into dist/main/preload.cjs as one CommonJS file:
// a sandboxed preload can require only 'electron', so the contract's channel names
// (src/common/api.ts) are bundled in rather than written twice.
import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vite';

export default defineConfig({
  logLevel: 'warn',
  build: {
    outDir: fileURLToPath(new URL('./dist/main', import.meta.url)),
    emptyOutDir: false,
    target: 'es2022',
    minify: false,
    sourcemap: false,
    lib: {
      entry: fileURLToPath(new URL('./src/main/preload.cts', import.meta.url)),
      formats: ['cjs'],
      fileName: () => 'preload.cjs',
    },
    rollupOptions: { external: ['electron'] },
  },
});
