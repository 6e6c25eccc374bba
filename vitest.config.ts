import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['test/**/*.test.ts'],
    testTimeout: 120_000,
    hookTimeout: 180_000,
    // Two cores here: one worker per core keeps timings of the solver tests steady.
    maxWorkers: 2,
    reporters: ['default'],
  },
});
