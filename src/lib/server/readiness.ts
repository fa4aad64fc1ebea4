import type { EntityManager } from '@mikro-orm/postgresql';

export interface ReadinessCheck {
	ok: boolean;
	detail?: string;
}

export interface Readiness {
	ready: boolean;
	checks: { database: ReadinessCheck; migrations: ReadinessCheck };
}

/**
 * Migration names known to this build. Vite resolves the glob at build time, so a deployed server
 * knows which migrations it expects without reading the source tree (the files are never imported).
 */
const EXPECTED_MIGRATIONS = Object.keys(import.meta.glob('/migrations/*.ts'))
	.map((path) => path.replace(/^.*\//, '').replace(/\.ts$/, ''))
	.sort();

/** Ready when the database answers and every migration this build knows is applied. */
export async function checkReadiness(em: EntityManager): Promise<Readiness> {
	const database: ReadinessCheck = { ok: false };
	const migrations: ReadinessCheck = { ok: false };
	let applied: Set<string> = new Set();
	try {
		const rows = await em.getConnection().execute<{ name: string }[]>(`select name from mikro_orm_migrations`);
		database.ok = true;
		applied = new Set(rows.map((row) => row.name.replace(/\.ts$/, '')));
	} catch (error) {
		const message = (error as Error).message;
		// A reachable database without the migrations table has simply not been migrated yet.
		database.ok = /mikro_orm_migrations/.test(message);
		database.detail = database.ok ? undefined : message;
	}
	if (database.ok) {
		const pending = EXPECTED_MIGRATIONS.filter((name) => !applied.has(name));
		migrations.ok = pending.length === 0;
		if (!migrations.ok) migrations.detail = `${pending.length} pending: ${pending.join(', ')}`;
	}
	return { ready: database.ok && migrations.ok, checks: { database, migrations } };
}
