import { defineConfig } from 'vitest/config';

// The tests that need the Electron binary (not in `npm test`, which runs everywhere and skips nothing).
export default defineConfig({
  test: {
    include: ['test/desktop/**/*.desktop.ts'],
    testTimeout: 240_000,
    pool: 'forks',
  },
});
