/**
 * `npm run migrate`: applies pending migrations to DATABASE_URL, or, when it is unset, to the local
 * cluster `npm start` uses (started for the purpose and stopped again).
 */
import { openLocalDatabase } from './local-database';
import { migrateDatabase } from './migrate';

const local = process.env.DATABASE_URL ? null : await openLocalDatabase();
try {
	const applied = await migrateDatabase(process.env.DATABASE_URL ?? local!.url);
	console.log(applied.length ? `applied: ${applied.join(', ')}` : 'the database schema is up to date');
} finally {
	local?.stop();
}
