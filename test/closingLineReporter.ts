/**
 * Prints one plain closing line after the suite, `N passed, N failed, N skipped`, so
 * that any tool that reads a test run's last line (CI among them) can count it without
 * knowing vitest's own summary format.
 */
import type { Reporter, TestModule } from 'vitest/node';

export default class ClosingLineReporter implements Reporter {
  onTestRunEnd(modules: ReadonlyArray<TestModule>): void {
    let passed = 0;
    let failed = 0;
    let skipped = 0;
    for (const m of modules) {
      for (const t of m.children.allTests()) {
        const state = t.result().state;
        if (state === 'passed') passed++;
        else if (state === 'failed') failed++;
        else skipped++;
      }
      if (m.state() === 'failed' && [...m.children.allTests()].length === 0) failed++;
    }
    process.stdout.write(`\nTests: ${passed} passed, ${failed} failed, ${skipped} skipped\n`);
  }
}
