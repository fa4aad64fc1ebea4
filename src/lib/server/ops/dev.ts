/** `npm run dev`: Vite's dev server against the same local database `npm start` uses. */
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { startMailCatcher } from '../mail/capture-server';
import { localStateDir, openLocalDatabase } from './local-database';
import { hasOwnObjectStore, startLocalObjectStore } from './local-object-store';
import { migrateDatabase, seedDemo } from './migrate';
import { PROJECT_ROOT } from './project-paths';
import { onShutdown } from './shutdown';

const database = await openLocalDatabase();
onShutdown(() => database.stop());
await migrateDatabase({ ownerUrl: database.ownerUrl, runtimeUrl: database.url });
if (!hasOwnObjectStore(process.env)) {
	const objects = await startLocalObjectStore(join(localStateDir(), 'objects'));
	onShutdown(() => void objects.close());
	Object.assign(process.env, objects.env);
}
await seedDemo(database.url);
const mailDir = join(localStateDir(), 'mail');
const mail = process.env.SMTP_URL ? null : await startMailCatcher({ dir: mailDir });
const mailEnv = mail ? { SMTP_URL: mail.url, CANDLEBOOK_MAIL_CAPTURE_DIR: mailDir } : {};

// Vite is started directly: `npx vite` leaves its child listening when killed.
const vite = spawn(
	join(PROJECT_ROOT, 'node_modules', '.bin', 'vite'),
	['dev', '--host', '127.0.0.1', ...process.argv.slice(2)],
	{
		cwd: PROJECT_ROOT,
		env: { ...process.env, ...mailEnv, DATABASE_URL: database.url },
		stdio: 'inherit'
	}
);
process.removeAllListeners('SIGINT');
process.on('SIGINT', () => vite.kill('SIGTERM'));
vite.on('exit', (code) => process.exit(code ?? 0));
