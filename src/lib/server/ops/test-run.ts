/**
 * `npm test`: a throwaway PostgreSQL on a free loopback port → migrations → vitest (unit and
 * integration) → production build → browser tests in Debian's Chromium, with the app's mail going to a
 * local fake SMTP server → teardown, even on failure.
 * Exits non-zero when anything failed or when a runner ran nothing.
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startMailCatcher } from '../mail/capture-server';
import { buildApp } from './build';
import { openThrowawayDatabase } from './local-database';
import { startLocalObjectStore } from './local-object-store';
import { migrateDatabase } from './migrate';
import { freePort } from './postgres-cluster';
import { PROJECT_ROOT } from './project-paths';
import { onShutdown } from './shutdown';
import { CHROMIUM, ensureSystemPackages, LIBXML2_UTILS, POSTGRESQL, PYTHON3_ASTROPY } from './system-packages';

interface RunnerSummary {
	runner: string;
	passed: number;
	failed: number;
	skipped: number;
}

ensureSystemPackages([POSTGRESQL, CHROMIUM, PYTHON3_ASTROPY, LIBXML2_UTILS]);
const summaryDir = mkdtempSync(join(tmpdir(), 'candlebook-test-summary-'));
/**
 * Databases beside the test database in the same cluster, each for the test that needs a database of
 * its own (the demo seed check, so the demo never mixes with test data), named to the tests by
 * CANDLEBOOK_<NAME>_DATABASE_URL (runtime role) and CANDLEBOOK_<NAME>_DATABASE_OWNER_URL (owner role).
 */
const SEPARATE_DATABASES = {
	DEMO: 'candlebook_demo_check',
	ROLES: 'candlebook_roles_check',
	PUBLIC_DEMO: 'candlebook_public_demo_check'
};
const database = await openThrowawayDatabase('candlebook_test', Object.values(SEPARATE_DATABASES));
const mailDir = join(summaryDir, 'mail');
const mail = await startMailCatcher({ dir: mailDir });
const objects = await startLocalObjectStore(join(summaryDir, 'objects'));
onShutdown(() => {
	void mail.close();
	void objects.close();
	database.stop();
	rmSync(summaryDir, { recursive: true, force: true });
});
console.log(`[candlebook] throwaway PostgreSQL on 127.0.0.1:${database.port}`);
await migrateDatabase({ ownerUrl: database.ownerUrl, runtimeUrl: database.url });

const env: NodeJS.ProcessEnv = {
	...process.env,
	// The runtime role, as the app connects; tests that clean tables use the owner role.
	DATABASE_URL: database.url,
	DATABASE_OWNER_URL: database.ownerUrl,
	...Object.fromEntries(
		Object.entries(SEPARATE_DATABASES).flatMap(([name, extra]) => [
			[`CANDLEBOOK_${name}_DATABASE_URL`, database.extraUrls[extra]],
			[`CANDLEBOOK_${name}_DATABASE_OWNER_URL`, database.extraOwnerUrls[extra]]
		])
	),
	CANDLEBOOK_TEST_SUMMARY_DIR: summaryDir,
	CANDLEBOOK_REFERENCE_DATA: process.env.CANDLEBOOK_REFERENCE_DATA ?? join(PROJECT_ROOT, '..', 'shared', 'data'),
	LOG_LEVEL: process.env.LOG_LEVEL ?? 'warn',
	// Password hashing at the lowest cost the configuration accepts: tests check behaviour, not
	// hashing strength, and standard parameters would make each sign-in in a test cost ~50 ms.
	CANDLEBOOK_ARGON2_MEMORY_KIB: '1024',
	CANDLEBOOK_ARGON2_PASSES: '1',
	...objects.env
};
const bin = (name: string) => join(PROJECT_ROOT, 'node_modules', '.bin', name);
// Asynchronous, so the fake SMTP server in this process keeps answering while the runners work.
const run = (command: string, args: string[], extraEnv: NodeJS.ProcessEnv = {}) =>
	new Promise<number>((resolve) => {
		const child = spawn(command, args, { cwd: PROJECT_ROOT, env: { ...env, ...extraEnv }, stdio: 'inherit' });
		child.on('error', () => resolve(1));
		child.on('exit', (code) => resolve(code ?? 1));
	});

// For a quick loop while working on one part: CANDLEBOOK_TEST_ONLY=vitest|browser runs one runner, and
// CANDLEBOOK_BROWSER_TESTS names browser test files (space-separated). Unset, both run in full.
const only = process.env.CANDLEBOOK_TEST_ONLY;
const browserFiles = (process.env.CANDLEBOOK_BROWSER_TESTS ?? '').split(' ').filter(Boolean);
const vitestStatus = only === 'browser' ? 0 : await run(bin('vitest'), ['run', ...process.argv.slice(2)]);

let browserStatus = only === 'vitest' ? 0 : 1;
try {
	if (only !== 'vitest') buildApp();
	if (only !== 'vitest')
		browserStatus = await run(
			bin('playwright'),
			['test', '--config', 'tests/browser/playwright.config.ts', ...browserFiles],
			{
				// The served app and the browser tests need only the runtime role.
				DATABASE_OWNER_URL: undefined,
				CANDLEBOOK_TEST_PORT: String(await freePort()),
				SMTP_URL: mail.url,
				CANDLEBOOK_MAIL_CAPTURE_DIR: mailDir
			}
		);
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

const runners = only === 'vitest' ? ['vitest'] : only === 'browser' ? ['playwright'] : ['vitest', 'playwright'];
const summaries = runners.map((runner) => readSummary(runner) ?? { runner, passed: 0, failed: 1, skipped: 0 });
const ranNothing = summaries.some((summary) => summary.passed + summary.failed === 0);
const failed = vitestStatus !== 0 || browserStatus !== 0 || ranNothing;

console.log('');
for (const summary of summaries) {
	console.log(`${summary.runner}: ${summary.passed} passed, ${summary.failed} failed, ${summary.skipped} skipped`);
}
void mail.close();
void objects.close();
process.exit(failed ? 1 : 0);
