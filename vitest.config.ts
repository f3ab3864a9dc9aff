import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
    // Two test files at once on a 2-core machine: many whole-sequence cases spend long single-threaded
    // stretches rendering their frames, which a second file fills (measured: see DEVELOPERS.md, CI).
    maxWorkers: 2,
  },
});
