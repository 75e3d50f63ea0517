// A last plain line for any CI to read: "N passed, N failed[, N skipped]". Runs after vitest's default reporter.
// A test file that fails to load, or an error outside any test, counts as one failure, so a run that executed
// nothing because everything crashed never reads as green.
import type { Reporter, SerializedError, TestModule } from 'vitest/node';

export function summaryLine(testModules: ReadonlyArray<TestModule>, unhandledErrors: ReadonlyArray<SerializedError>): string {
  let passed = 0;
  let failed = 0;
  let skipped = 0;
  for (const module of testModules) {
    let failedInModule = 0;
    for (const test of module.children.allTests()) {
      const state = test.result().state;
      if (state === 'passed') passed++;
      else if (state === 'failed') failedInModule++;
      else skipped++;
    }
    // A module whose collection or hooks failed carries its errors itself.
    if (failedInModule === 0 && module.state() === 'failed') failedInModule = 1;
    failed += failedInModule;
  }
  failed += unhandledErrors.length;
  return `${passed} passed, ${failed} failed${skipped > 0 ? `, ${skipped} skipped` : ''}`;
}

export default class SummaryLineReporter implements Reporter {
  onTestRunEnd(testModules: ReadonlyArray<TestModule>, unhandledErrors: ReadonlyArray<SerializedError>): void {
    process.stdout.write(`\n${summaryLine(testModules, unhandledErrors)}\n`);
  }
}
