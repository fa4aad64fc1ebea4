/**
 * `npm test`: a throwaway PostgreSQL on a free loopback port → migrations → vitest (unit and
 * integration) → production build → browser tests in Debian's Chromium → teardown, even on failure.
 * Exits non-zero when anything failed or when a runner ran nothing.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { buildApp } from './build';
import { openThrowawayDatabase } from './local-database';
import { migrateDatabase } from './migrate';
import { freePort } from './postgres-cluster';
import { PROJECT_ROOT } from './project-paths';
import { onShutdown } from './shutdown';
import { CHROMIUM, ensureSystemPackages, POSTGRESQL } from './system-packages';

interface RunnerSummary {
	runner: string;
	passed: number;
	failed: number;
	skipped: number;
}

ensureSystemPackages([POSTGRESQL, CHROMIUM]);
const summaryDir = mkdtempSync(join(tmpdir(), 'candlebook-test-summary-'));
const database = await openThrowawayDatabase();
onShutdown(() => {
	database.stop();
	rmSync(summaryDir, { recursive: true, force: true });
});
console.log(`[candlebook] throwaway PostgreSQL on 127.0.0.1:${database.port}`);
await migrateDatabase(database.url);

const env: NodeJS.ProcessEnv = {
	...process.env,
	DATABASE_URL: database.url,
	CANDLEBOOK_TEST_SUMMARY_DIR: summaryDir,
	CANDLEBOOK_REFERENCE_DATA: process.env.CANDLEBOOK_REFERENCE_DATA ?? join(PROJECT_ROOT, '..', 'shared', 'data'),
	LOG_LEVEL: process.env.LOG_LEVEL ?? 'warn'
};
const bin = (name: string) => join(PROJECT_ROOT, 'node_modules', '.bin', name);
const run = (command: string, args: string[], extraEnv: NodeJS.ProcessEnv = {}) =>
	spawnSync(command, args, { cwd: PROJECT_ROOT, env: { ...env, ...extraEnv }, stdio: 'inherit' }).status ?? 1;

const vitestStatus = run(bin('vitest'), ['run', ...process.argv.slice(2)]);

let browserStatus = 1;
try {
	buildApp();
	browserStatus = run(bin('playwright'), ['test', '--config', 'tests/browser/playwright.config.ts'], {
		CANDLEBOOK_TEST_PORT: String(await freePort())
	});
} catch (error) {
	console.error(`[candlebook] browser tests could not run: ${(error as Error).message}`);
}

function readSummary(runner: string): RunnerSummary | null {
	try {
		return JSON.parse(readFileSync(join(summaryDir, `${runner}.json`), 'utf8')) as RunnerSummary;
	} catch {
		return null;
	}
}

const summaries = ['vitest', 'playwright'].map(
	(runner) => readSummary(runner) ?? { runner, passed: 0, failed: 1, skipped: 0 }
);
const ranNothing = summaries.some((summary) => summary.passed + summary.failed === 0);
const failed = vitestStatus !== 0 || browserStatus !== 0 || ranNothing;

console.log('');
for (const summary of summaries) {
	console.log(`${summary.runner}: ${summary.passed} passed, ${summary.failed} failed, ${summary.skipped} skipped`);
}
process.exit(failed ? 1 : 0);
