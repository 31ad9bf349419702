// Prints one plain closing line, "tests: N passed, N failed, N skipped", after vitest's own summary,
// so any log reader (CI included) can count results without parsing vitest's formatting.
// With CI=true a skipped test fails the run: a reference check that skips (a missing python module, say)
// would otherwise let CI pass without checking anything.
import type { Reporter, TestModule } from 'vitest/node';

export default class SummaryLineReporter implements Reporter {
  onTestRunEnd(testModules: ReadonlyArray<TestModule>, unhandledErrors: ReadonlyArray<unknown>): void {
    let passed = 0;
    let failed = 0;
    const skipped: string[] = [];
    for (const m of testModules) {
      for (const t of m.children.allTests()) {
        const state = t.result().state;
        if (state === 'passed') passed++;
        else if (state === 'failed') failed++;
        else skipped.push(`${m.moduleId.replace(`${process.cwd()}/`, '')} > ${t.fullName}`);
      }
      // A file that failed to load has no tests but is a failure.
      if (m.state() === 'failed' && [...m.children.allTests()].length === 0) failed++;
    }
    failed += unhandledErrors.length;
    process.stdout.write(`\ntests: ${passed} passed, ${failed} failed, ${skipped.length} skipped\n`);
    if (skipped.length > 0 && process.env.CI === 'true') {
      process.stdout.write(
        `CI=true: a skipped test is a failure. Skipped:\n${skipped.map((s) => `  ${s}\n`).join('')}`,
      );
      process.exitCode = 1;
    }
  }
}
