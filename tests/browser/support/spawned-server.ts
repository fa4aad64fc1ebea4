import { spawn, type ChildProcess } from 'node:child_process';
import { join } from 'node:path';
import { freePort } from '../../../src/lib/server/ops/postgres-cluster';
import { PROJECT_ROOT } from '../../../src/lib/server/ops/project-paths';

/** A production server of its own (src/lib/server/ops/serve.ts over the build), started with `env`. */
export interface SpawnedServer {
	base: string;
	stop: () => Promise<void>;
}

/** The environment with `overrides` applied; an empty value unsets the variable. */
export function environmentWith(overrides: NodeJS.ProcessEnv): NodeJS.ProcessEnv {
	const env = { ...process.env, ...overrides };
	for (const [name, value] of Object.entries(overrides)) if (value === '') delete env[name];
	return env;
}

export async function startServer(overrides: NodeJS.ProcessEnv): Promise<SpawnedServer> {
	const port = await freePort();
	const child = spawn(process.execPath, ['--import', 'tsx', join(PROJECT_ROOT, 'src/lib/server/ops/serve.ts')], {
		cwd: PROJECT_ROOT,
		env: environmentWith({
			HOST: '127.0.0.1',
			PORT: String(port),
			CANDLEBOOK_IN_PROCESS_WORKER: 'false',
			...overrides
		}),
		stdio: ['ignore', 'ignore', 'inherit']
	});
	const base = `http://127.0.0.1:${port}`;
	const deadline = Date.now() + 90_000;
	for (;;) {
		try {
			if ((await fetch(`${base}/healthz`)).ok) break;
		} catch {
			if (Date.now() > deadline || child.exitCode !== null) throw new Error('the spawned server did not start');
			await new Promise((resolve) => setTimeout(resolve, 200));
		}
	}
	return { base, stop: () => stopChild(child) };
}

async function stopChild(child: ChildProcess): Promise<void> {
	if (child.exitCode !== null || child.signalCode !== null) return;
	const exited = new Promise((resolve) => child.once('exit', resolve));
	child.kill('SIGTERM');
	await exited;
}

/**
 * Runs an entry point that is expected to stop on its own; one still running after `timeoutMs` is
 * killed (with everything it started) and reported with code null.
 */
export async function runUntilExit(
	script: string,
	overrides: NodeJS.ProcessEnv,
	timeoutMs = 20_000
): Promise<{ code: number | null; stderr: string }> {
	const child = spawn(process.execPath, ['--import', 'tsx', join(PROJECT_ROOT, script)], {
		cwd: PROJECT_ROOT,
		env: environmentWith(overrides),
		stdio: ['ignore', 'ignore', 'pipe'],
		detached: true
	});
	let stderr = '';
	child.stderr!.on('data', (chunk: Buffer) => (stderr += chunk.toString()));
	const code = await new Promise<number | null>((resolve) => {
		const timer = setTimeout(() => {
			process.kill(-child.pid!, 'SIGKILL');
			resolve(null);
		}, timeoutMs);
		child.once('exit', (exitCode) => {
			clearTimeout(timer);
			resolve(exitCode);
		});
	});
	return { code, stderr };
}
