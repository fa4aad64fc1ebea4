import type { EntityManager } from '@mikro-orm/postgresql';
import { logger } from './logger';
import { getObjectStorage } from './storage/app-storage';

export interface ReadinessCheck {
	ok: boolean;
	/** What is wrong, in words fit for anyone to read: never a raw error, SQL or connection string. */
	detail?: string;
}

export interface Readiness {
	ready: boolean;
	checks: { database: ReadinessCheck; migrations: ReadinessCheck; storage: ReadinessCheck };
}

/** A probe that takes longer than this counts as no answer (load balancers poll every few seconds). */
const PROBE_TIMEOUT_MS = 3_000;

/**
 * Migration names known to this build. Vite resolves the glob at build time, so a deployed server
 * knows which migrations it expects without reading the source tree (the files are never imported).
 */
const EXPECTED_MIGRATIONS = Object.keys(import.meta.glob('/migrations/*.ts'))
	.map((path) => path.replace(/^.*\//, '').replace(/\.ts$/, ''))
	.sort();

function withinTimeout<T>(work: Promise<T>): Promise<T> {
	let timer: ReturnType<typeof setTimeout> | undefined;
	const timeout = new Promise<never>((_, reject) => {
		timer = setTimeout(() => reject(new Error(`no answer within ${PROBE_TIMEOUT_MS} ms`)), PROBE_TIMEOUT_MS);
	});
	return Promise.race([work, timeout]).finally(() => clearTimeout(timer));
}

async function checkDatabase(em: EntityManager): Promise<{ database: ReadinessCheck; applied: Set<string> | null }> {
	try {
		const rows = await withinTimeout(
			em.getConnection().execute<{ name: string }[]>(`select name from mikro_orm_migrations`)
		);
		return { database: { ok: true }, applied: new Set(rows.map((row) => row.name.replace(/\.ts$/, ''))) };
	} catch (error) {
		// A reachable database without the migrations table has simply not been migrated yet.
		if (/mikro_orm_migrations/.test((error as Error).message)) return { database: { ok: true }, applied: new Set() };
		logger.warn({ err: error }, 'readiness: the database did not answer');
		return { database: { ok: false, detail: 'the database does not answer (the server log says why)' }, applied: null };
	}
}

async function checkObjectStore(): Promise<ReadinessCheck> {
	let storage;
	try {
		storage = getObjectStorage();
	} catch {
		return { ok: false, detail: 'object storage is not configured (S3_ACCESS_KEY_ID, S3_SECRET_ACCESS_KEY)' };
	}
	try {
		await withinTimeout(storage.list('readiness-probe/').next());
		return { ok: true };
	} catch (error) {
		logger.warn({ err: error }, 'readiness: object storage did not answer');
		return { ok: false, detail: 'object storage does not answer (the server log says why)' };
	}
}

/** Ready when the database answers, every migration this build knows is applied and object storage answers. */
export async function checkReadiness(em: EntityManager): Promise<Readiness> {
	const [{ database, applied }, storage] = await Promise.all([checkDatabase(em), checkObjectStore()]);
	const migrations: ReadinessCheck = { ok: false };
	if (applied) {
		const pending = EXPECTED_MIGRATIONS.filter((name) => !applied.has(name));
		migrations.ok = pending.length === 0;
		if (!migrations.ok) migrations.detail = `${pending.length} pending: ${pending.join(', ')}`;
	} else {
		migrations.detail = 'unknown until the database answers';
	}
	return {
		ready: database.ok && migrations.ok && storage.ok,
		checks: { database, migrations, storage }
	};
}
