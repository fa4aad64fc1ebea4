import type { MikroORM } from '@mikro-orm/postgresql';
import { quoteIdentifier } from './postgres-cluster';

/**
 * Two roles share Candlebook's database. The owner role owns every table, the freeze trigger function
 * and the job queue's schema, and is used only to migrate. The runtime role, which the app, the
 * workers and the tests connect as, owns nothing: it reads and writes rows and can neither alter,
 * truncate nor drop a table, nor switch off or replace the trigger that keeps approved content frozen.
 */

/** The schemas the app reads and writes: its own tables, and pg-boss's job queue. */
export const APP_SCHEMAS = ['public', 'pgboss'] as const;

/** The statements, run as the owner role, that give the runtime role row access and nothing more. */
export function runtimeGrantStatements(runtimeRole: string): string[] {
	const runtime = quoteIdentifier(runtimeRole);
	const schemas = APP_SCHEMAS.map(quoteIdentifier).join(', ');
	const rowAccess = 'SELECT, INSERT, UPDATE, DELETE';
	return [
		`GRANT USAGE ON SCHEMA ${schemas} TO ${runtime}`,
		`GRANT ${rowAccess} ON ALL TABLES IN SCHEMA ${schemas} TO ${runtime}`,
		`GRANT USAGE ON ALL SEQUENCES IN SCHEMA ${schemas} TO ${runtime}`,
		// Tables and sequences later migrations (or new job queues) create are granted as they appear.
		`ALTER DEFAULT PRIVILEGES IN SCHEMA ${schemas} GRANT ${rowAccess} ON TABLES TO ${runtime}`,
		`ALTER DEFAULT PRIVILEGES IN SCHEMA ${schemas} GRANT USAGE ON SEQUENCES TO ${runtime}`,
		// The app only reads which migrations ran (readiness); only migrations record them.
		`REVOKE INSERT, UPDATE, DELETE ON TABLE public.mikro_orm_migrations FROM ${runtime}`
	];
}

/** The role a postgres:// URL connects as. */
export function roleOfUrl(url: string): string {
	return decodeURIComponent(new URL(url).username);
}

/** Refuses a set-up where the app would connect as the role that owns the tables. */
export async function assertSeparateRoles(ownerOrm: MikroORM, runtimeRole: string): Promise<void> {
	const [{ owner }] = await ownerOrm.em.getConnection().execute<{ owner: string }[]>('select current_user as owner');
	if (owner !== runtimeRole) return;
	throw new Error(
		`the runtime role and the owner role are both "${owner}": the app must connect as a role that owns nothing ` +
			'(DATABASE_URL) and migrations run as the owner (DATABASE_OWNER_URL)'
	);
}

/** Grants the runtime role its row access; run as the owner role after every migration. */
export async function grantRuntimeAccess(ownerOrm: MikroORM, runtimeRole: string): Promise<void> {
	const connection = ownerOrm.em.getConnection();
	for (const statement of runtimeGrantStatements(runtimeRole)) await connection.execute(statement);
}
