/**
 * `npm run migrate`: applies pending migrations as the owner role, creates or upgrades the job queue's
 * schema, and grants the runtime role row access. On the database named by DATABASE_OWNER_URL (owner)
 * and DATABASE_URL (runtime); with neither set, on the local cluster `npm start` uses (started for the
 * purpose and stopped again).
 */
import { parseConfig } from '../config';
import { openLocalDatabase } from './local-database';
import { migrateDatabase, type MigrationTarget } from './migrate';

async function target(): Promise<MigrationTarget & { stop?: () => void }> {
	const { DATABASE_URL, DATABASE_OWNER_URL } = process.env;
	if (!DATABASE_URL && !DATABASE_OWNER_URL) {
		const local = await openLocalDatabase();
		return { ownerUrl: local.ownerUrl, runtimeUrl: local.url, stop: local.stop };
	}
	if (!DATABASE_OWNER_URL) {
		throw new Error(
			'DATABASE_OWNER_URL is required beside DATABASE_URL: migrations run as the role that owns the tables, ' +
				'the app as a role that owns nothing (see "Running with your own PostgreSQL" in README.md)'
		);
	}
	const config = parseConfig(process.env);
	return { ownerUrl: config.DATABASE_OWNER_URL!, runtimeUrl: config.DATABASE_URL };
}

const database = await target();
try {
	const applied = await migrateDatabase(database);
	console.log(applied.length ? `applied: ${applied.join(', ')}` : 'the database schema is up to date');
} finally {
	database.stop?.();
}
