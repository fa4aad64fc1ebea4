/**
 * `npm start`: the project's own PostgreSQL on 127.0.0.1 → migrations → demo seed → build if stale →
 * the production server. Ctrl-C stops the server and then the database.
 */
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { buildIfStale } from './build';
import { openLocalDatabase } from './local-database';
import { migrateDatabase, seedDemo } from './migrate';
import { PROJECT_ROOT } from './project-paths';
import { serverEnvironment } from './server-environment';
import { onShutdown } from './shutdown';

const database = await openLocalDatabase();
const running: { server?: ReturnType<typeof spawn> } = {};
onShutdown(() => {
	running.server?.kill('SIGKILL');
	database.stop();
});
console.log(`[candlebook] PostgreSQL on 127.0.0.1:${database.port}, data in ${database.location}`);

const applied = await migrateDatabase(database.url);
console.log(
	applied.length
		? `[candlebook] applied migrations: ${applied.join(', ')}`
		: '[candlebook] database schema is up to date'
);
await seedDemo(database.url);
buildIfStale();

const env = serverEnvironment(database.url);
const server = spawn(process.execPath, [join(PROJECT_ROOT, 'build', 'index.js')], {
	cwd: PROJECT_ROOT,
	env,
	stdio: 'inherit'
});
running.server = server;
console.log(`[candlebook] serving ${env.ORIGIN} (Ctrl-C to stop)`);

const stopServer = () => server.kill('SIGTERM');
process.removeAllListeners('SIGINT');
process.removeAllListeners('SIGTERM');
process.on('SIGINT', stopServer);
process.on('SIGTERM', stopServer);
server.on('exit', (code, signal) => {
	database.stop();
	process.exit(signal ? 0 : (code ?? 0));
});
