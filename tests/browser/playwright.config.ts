import { defineConfig } from '@playwright/test';

const port = Number(process.env.CANDLEBOOK_TEST_PORT ?? 4173);
const origin = `http://127.0.0.1:${port}`;

/** Browser tests drive Debian's Chromium against the production build; no browser is ever downloaded. */
export default defineConfig({
	testDir: '.',
	testMatch: '**/*.test.ts',
	fullyParallel: false,
	workers: 1,
	retries: 0,
	timeout: 30_000,
	forbidOnly: true,
	reporter: [['list'], ['./summary-reporter.ts']],
	outputDir: '../../test-results',
	use: {
		baseURL: origin,
		launchOptions: {
			executablePath: '/usr/bin/chromium',
			args: [
				'--headless',
				'--no-sandbox',
				'--disable-gpu',
				'--disable-quic',
				'--no-first-run',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync',
				'--disable-dev-shm-usage'
			]
		}
	},
	webServer: {
		// The production path: the front server (cache, rate limit) in front of the SvelteKit build.
		command: 'node --import tsx src/lib/server/ops/serve.ts',
		cwd: '../..',
		url: `${origin}/healthz`,
		reuseExistingServer: false,
		timeout: 60_000,
		// Server errors are logged as JSON lines; show them beside the failing test.
		stdout: 'pipe',
		stderr: 'pipe',
		env: {
			HOST: '127.0.0.1',
			PORT: String(port),
			ORIGIN: origin,
			BODY_SIZE_LIMIT: '64M',
			// High enough that no test (the authorization matrix makes thousands of anonymous calls) sees 429;
			// front-server.test.ts starts its own instance with a low limit.
			CANDLEBOOK_ANON_RATE_LIMIT: '1000000/60'
		}
	}
});
