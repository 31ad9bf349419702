import { defineConfig } from 'vitest/config';

export default defineConfig({
  test: {
    include: ['tests/**/*.test.ts'],
    reporters: ['default', './tests/support/summary-reporter.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    // Integration suites open ptys, ports and a browser: keep files from fighting over the two cores.
    fileParallelism: true,
    maxWorkers: 2,
  },
});
