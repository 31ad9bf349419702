import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    // Integration suites open ptys, ports and a browser: keep files from fighting over the two cores.
    fileParallelism: true,
    maxWorkers: 2,
  },
});
