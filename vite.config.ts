import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { host: '127.0.0.1' },
	preview: { host: '127.0.0.1' },
	test: {
		reporters: ['default', './tests/support/summary-reporter.ts'],
		projects: [
			{
				extends: true,
				test: {
					name: 'unit',
					environment: 'node',
					include: ['src/**/*.test.ts', 'tests/unit/**/*.test.ts'],
					expect: { requireAssertions: true }
				}
			},
			{
				extends: true,
				test: {
					name: 'integration',
					environment: 'node',
					include: ['tests/integration/**/*.test.ts'],
					fileParallelism: false,
					testTimeout: 30_000,
					hookTimeout: 60_000,
					expect: { requireAssertions: true },
					execArgv: ['--import', 'tsx']
				}
			}
		]
	}
});
