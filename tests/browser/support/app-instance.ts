import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { freePort } from '../../../src/lib/server/ops/postgres-cluster';
import { PROJECT_ROOT } from '../../../src/lib/server/ops/project-paths';

export interface AppInstance {
	origin: string;
	stop: () => Promise<void>;
}

/**
 * Another instance of the production server (front server + build) on a free loopback port, sharing
 * the test database, with `env` on top of this process's environment. Resolves once /healthz answers.
 */
export async function startAppInstance(env: Record<string, string>): Promise<AppInstance> {
	const port = await freePort();
	const origin = `http://127.0.0.1:${port}`;
	const child = spawn(process.execPath, ['--import', 'tsx', join(PROJECT_ROOT, 'src/lib/server/ops/serve.ts')], {
		cwd: PROJECT_ROOT,
		env: { ...process.env, HOST: '127.0.0.1', PORT: String(port), ORIGIN: origin, ...env },
		stdio: ['ignore', 'ignore', 'inherit']
	});
	const deadline = Date.now() + 30_000;
	for (;;) {
		try {
			if ((await fetch(`${origin}/healthz`)).ok) break;
		} catch {
			if (Date.now() > deadline || child.exitCode !== null)
				throw new Error(`the app instance on ${origin} did not start`);
			await new Promise((resolve) => setTimeout(resolve, 200));
		}
	}
	return {
		origin,
		stop: async () => {
			if (child.exitCode !== null) return;
			const exited = new Promise((resolve) => child.once('exit', resolve));
			child.kill('SIGTERM');
			await exited;
		}
	};
}
