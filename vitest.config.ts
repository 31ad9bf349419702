import { defineConfig } from 'vitest/config';

// Suites that run against the wall clock (a pty streaming at rate, a browser watching a replay, kill -9 of a
// recording agent) run after the others, one file at a time, so they never compete for the two cores with
// CPU-heavy reference checks or with each other.
const realtime = [
  'tests/serial/pty-*.test.ts',
  'tests/service/healthz.test.ts',
  'tests/replay/live-run.test.ts',
  'tests/recorder/crash.test.ts',
  'tests/service/shutdown.test.ts',
  'tests/notify/webhook-outage.test.ts',
  'tests/retention/small-disk.test.ts',
  'tests/notify/pty-incidents.test.ts',
  'tests/service/reload.test.ts',
  'tests/service/log-lines.test.ts',
  'tests/store/commit-stall.test.ts',
  'tests/monitor/live-settings.test.ts',
  'tests/server/file-handles.test.ts',
  'tests/server/leaks.test.ts',
  'tests/browser/**/*.test.ts',
];

export default defineConfig({
  test: {
    reporters: ['default', './tests/support/summary-reporter.ts'],
    // Python reference versions checked and dist/ built once, before any worker starts.
    globalSetup: ['./tests/support/global-setup.ts'],
    testTimeout: 60_000,
    hookTimeout: 60_000,
    maxWorkers: 2,
    projects: [
      {
        extends: true,
        test: { name: 'unit', include: ['tests/**/*.test.ts'], exclude: realtime, sequence: { groupOrder: 0 } },
      },
      {
        extends: true,
        test: { name: 'realtime', include: realtime, fileParallelism: false, sequence: { groupOrder: 1 } },
      },
    ],
  },
});
