import type { Reporter, TestModule } from 'vitest/node';
import { reportCounts } from './summary-file';

/** Prints one plain closing line, `vitest: N passed, N failed, N skipped`, that CI reads. */
export default class SummaryReporter implements Reporter {
	onTestRunEnd(testModules: ReadonlyArray<TestModule>, unhandledErrors: ReadonlyArray<unknown>) {
		const counts = { passed: 0, failed: unhandledErrors.length, skipped: 0 };
		for (const testModule of testModules) {
			// A file that failed to load has no tests but must still count as a failure.
			if (testModule.state() === 'failed' && testModule.children.size === 0) counts.failed += 1;
			for (const test of testModule.children.allTests()) {
				const state = test.result().state;
				if (state === 'passed') counts.passed += 1;
				else if (state === 'failed') counts.failed += 1;
				else counts.skipped += 1;
			}
		}
		reportCounts('vitest', counts);
	}
}
