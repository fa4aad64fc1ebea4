import { spawnSync } from 'node:child_process';
import { existsSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { PROJECT_ROOT } from './project-paths';

const BUILD_INPUTS = [
	'src',
	'static',
	'migrations',
	'svelte.config.js',
	'vite.config.ts',
	'tailwind.config.ts',
	'mikro-orm.config.ts',
	'package-lock.json'
];
const BUILD_OUTPUT = join(PROJECT_ROOT, 'build', 'handler.js');

function newestModification(path: string): number {
	if (!existsSync(path)) return 0;
	const stats = statSync(path);
	if (!stats.isDirectory()) return stats.mtimeMs;
	let newest = stats.mtimeMs;
	for (const entry of readdirSync(path)) newest = Math.max(newest, newestModification(join(path, entry)));
	return newest;
}

/** True when any source of the production build is newer than the build itself. */
export function isBuildStale(): boolean {
	if (!existsSync(BUILD_OUTPUT)) return true;
	const built = statSync(BUILD_OUTPUT).mtimeMs;
	return BUILD_INPUTS.some((input) => newestModification(join(PROJECT_ROOT, input)) > built);
}

export function buildApp(): void {
	console.log('[candlebook] building the app (vite build)');
	const result = spawnSync(join(PROJECT_ROOT, 'node_modules', '.bin', 'vite'), ['build', '--logLevel', 'warn'], {
		cwd: PROJECT_ROOT,
		stdio: 'inherit'
	});
	if (result.status !== 0) throw new Error(`vite build failed (exit ${result.status})`);
}

export function buildIfStale(): void {
	if (isBuildStale()) buildApp();
}
