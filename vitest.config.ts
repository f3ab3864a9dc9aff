import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    pool: 'forks',
    // Two test files at once on a 2-core machine: many whole-sequence cases spend long single-threaded
    // stretches rendering their frames, which a second file fills (clean-clone CI here: 565 s with one
    // file at a time, 462 s with two).
    maxWorkers: 2,
  },
});
