/** `npm run dev`: Vite's dev server against the same local database `npm start` uses. */
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { openLocalDatabase } from './local-database';
import { migrateDatabase, seedDemo } from './migrate';
import { PROJECT_ROOT } from './project-paths';
import { onShutdown } from './shutdown';

const database = await openLocalDatabase();
onShutdown(() => database.stop());
await migrateDatabase(database.url);
await seedDemo(database.url);

// Vite is started directly: `npx vite` leaves its child listening when killed.
const vite = spawn(
	join(PROJECT_ROOT, 'node_modules', '.bin', 'vite'),
	['dev', '--host', '127.0.0.1', ...process.argv.slice(2)],
	{
		cwd: PROJECT_ROOT,
		env: { ...process.env, DATABASE_URL: database.url },
		stdio: 'inherit'
	}
);
process.removeAllListeners('SIGINT');
process.on('SIGINT', () => vite.kill('SIGTERM'));
vite.on('exit', (code) => process.exit(code ?? 0));
