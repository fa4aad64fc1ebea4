/**
 * `npm start`: the project's own PostgreSQL on 127.0.0.1 → migrations → demo seed → build if stale →
 * the production server (the front server in serve.ts in front of the SvelteKit build), with a local fake SMTP server catching its mail (unless SMTP_URL is set) and a
 * local fake S3 server keeping uploaded files (unless S3_* names an object store).
 * Ctrl-C stops the server and then the database.
 */
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { buildIfStale } from './build';
import { startMailCatcher, type MailCatcher } from '../mail/capture-server';
import { localStateDir, openLocalDatabase } from './local-database';
import { hasOwnObjectStore, startLocalObjectStore, type LocalObjectStore } from './local-object-store';
import { seedForStart } from './demo-seeding';
import { migrateDatabase } from './migrate';
import { PROJECT_ROOT } from './project-paths';
import { serverEnvironment } from './server-environment';
import { onShutdown } from './shutdown';
import { publicOriginProblem } from '../config';

const originProblem = publicOriginProblem(process.env, '127.0.0.1');
if (originProblem) {
	console.error(`[candlebook] ${originProblem}`);
	process.exit(1);
}

const database = await openLocalDatabase();
const running: { server?: ReturnType<typeof spawn>; mail?: MailCatcher; objects?: LocalObjectStore } = {};
onShutdown(() => {
	running.server?.kill('SIGKILL');
	void running.mail?.close();
	void running.objects?.close();
	database.stop();
});
console.log(`[candlebook] PostgreSQL on 127.0.0.1:${database.port}, data in ${database.location}`);

const applied = await migrateDatabase({ ownerUrl: database.ownerUrl, runtimeUrl: database.url });
console.log(
	applied.length
		? `[candlebook] applied migrations: ${applied.join(', ')}`
		: '[candlebook] database schema is up to date'
);
if (!hasOwnObjectStore(process.env)) {
	running.objects = await startLocalObjectStore(join(localStateDir(), 'objects'));
	// The demo seed uploads its invented files too, so it needs the store before the server does.
	Object.assign(process.env, running.objects.env);
	console.log(`[candlebook] uploaded files go to a local fake S3 server (${running.objects.env.S3_ENDPOINT})`);
}
await seedForStart(database.url, process.env);
buildIfStale();

const env = serverEnvironment(database.url);
if (!process.env.SMTP_URL) {
	const mailDir = join(localStateDir(), 'mail');
	running.mail = await startMailCatcher({ dir: mailDir });
	env.SMTP_URL = running.mail.url;
	env.CANDLEBOOK_MAIL_CAPTURE_DIR = mailDir;
	console.log(
		`[candlebook] mail goes to a local fake SMTP server (${running.mail.url}); admins read it at /admin/mail`
	);
}
const server = spawn(
	process.execPath,
	['--import', 'tsx', join(PROJECT_ROOT, 'src', 'lib', 'server', 'ops', 'serve.ts')],
	{
		cwd: PROJECT_ROOT,
		env,
		stdio: 'inherit'
	}
);
running.server = server;
console.log(`[candlebook] serving ${env.ORIGIN} (Ctrl-C to stop)`);

const stopServer = () => server.kill('SIGTERM');
process.removeAllListeners('SIGINT');
process.removeAllListeners('SIGTERM');
process.on('SIGINT', stopServer);
process.on('SIGTERM', stopServer);
server.on('exit', (code, signal) => {
	void running.mail?.close();
	void running.objects?.close();
	database.stop();
	process.exit(signal ? 0 : (code ?? 0));
});
