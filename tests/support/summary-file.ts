import { writeFileSync } from 'node:fs';
import { join } from 'node:path';

export interface RunnerCounts {
	passed: number;
	failed: number;
	skipped: number;
}

/** Prints the plain closing line CI reads and, under `npm test`, leaves the counts for the final summary. */
export function reportCounts(runner: string, counts: RunnerCounts): void {
	process.stdout.write(`\n${runner}: ${counts.passed} passed, ${counts.failed} failed, ${counts.skipped} skipped\n`);
	const dir = process.env.CANDLEBOOK_TEST_SUMMARY_DIR;
	if (dir) writeFileSync(join(dir, `${runner}.json`), JSON.stringify({ runner, ...counts }));
}
