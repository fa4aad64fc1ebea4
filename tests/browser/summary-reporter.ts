import type { FullResult, Reporter, TestCase, TestResult } from '@playwright/test/reporter';
import { reportCounts } from '../support/summary-file';

/** Prints one plain closing line, `playwright: N passed, N failed, N skipped`, that CI reads. */
export default class SummaryReporter implements Reporter {
	private readonly outcomes = new Map<string, TestCase>();

	onTestEnd(test: TestCase, _result: TestResult): void {
		this.outcomes.set(test.id, test);
	}

	onEnd(_result: FullResult): void {
		const counts = { passed: 0, failed: 0, skipped: 0 };
		for (const test of this.outcomes.values()) {
			const outcome = test.outcome();
			if (outcome === 'expected' || outcome === 'flaky') counts.passed += 1;
			else if (outcome === 'skipped') counts.skipped += 1;
			else counts.failed += 1;
		}
		reportCounts('playwright', counts);
	}
}
