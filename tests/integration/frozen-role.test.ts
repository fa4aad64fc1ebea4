import { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import config from '../../mikro-orm.config';
import { Migration20261201194348 } from '../../migrations/Migration20261201194348';
import { Migration20261202001000 } from '../../migrations/Migration20261202001000';
import { closeOrm, getOrm } from '../../src/lib/server/db';
import { FIT_QUEUE, startJobQueue } from '../../src/lib/server/jobs/queue';
import { migrateDatabase, seedDemo } from '../../src/lib/server/ops/migrate';

/**
 * Approved content stays frozen even for the role the app connects as. The runtime role owns no
 * table, function or schema, so it can neither switch the freeze trigger off, drop or replace it, nor
 * truncate or drop a frozen table; only the owner role, which runs the migrations, could. On a
 * database of its own (CANDLEBOOK_ROLES_DATABASE_*), migrated by the owner and seeded with the demo by
 * the runtime role, so it holds frozen versions, revisions and value sources.
 */
const runtimeUrl = process.env.CANDLEBOOK_ROLES_DATABASE_URL;
const ownerUrl = process.env.CANDLEBOOK_ROLES_DATABASE_OWNER_URL;
const started = performance.now();
let runtime: MikroORM;
let owner: MikroORM;

/** Opened the way db.ts opens the app's own ORM. */
const openOrm = (clientUrl: string) => MikroORM.init({ ...config, clientUrl, debug: false });

const SUCCEEDED = 'the statement succeeded (and was rolled back)';

/** Runs one statement in a transaction that is always rolled back; answers the database's refusal. */
async function attempt(orm: MikroORM, sql: string): Promise<string> {
	try {
		await orm.em.fork().transactional(async (em) => {
			await em.execute(sql);
			throw new Error(SUCCEEDED);
		});
	} catch (error) {
		return (error as Error).message;
	}
	return 'no answer';
}

async function frozenCounts(orm: MikroORM) {
	const [row] = await orm.em.fork().execute<{ versions: number; revisions: number; sources: number }[]>(
		`select (select count(*) from app_relation_version)::int as versions,
		        (select count(*) from app_calibrator_revision)::int as revisions,
		        (select count(*) from app_calibrator_value_source)::int as sources`
	);
	return row;
}

async function ownedByMe(orm: MikroORM) {
	const [row] = await orm.em.fork().execute<Record<string, number | boolean | string>[]>(
		`select current_user as me,
		        (select count(*) from pg_class c join pg_namespace n on n.oid = c.relnamespace
		          where c.relowner = current_user::regrole and n.nspname in ('public', 'pgboss'))::int as relations,
		        (select count(*) from pg_proc where proowner = current_user::regrole)::int as functions,
		        (select count(*) from pg_namespace where nspowner = current_user::regrole)::int as schemas,
		        (select datdba = current_user::regrole from pg_database where datname = current_database()) as owns_database,
		        (select rolsuper or rolcreaterole or rolcreatedb or rolbypassrls from pg_roles where rolname = current_user) as elevated`
	);
	return row;
}

beforeAll(async () => {
	if (!runtimeUrl || !ownerUrl) {
		throw new Error('CANDLEBOOK_ROLES_DATABASE_URL/_OWNER_URL are not set: run integration tests through `npm test`');
	}
	await migrateDatabase({ ownerUrl, runtimeUrl });
	// The app's normal writes, as the runtime role: accounts, uploads, fits, proposals, approved versions.
	await seedDemo(runtimeUrl);
	runtime = await openOrm(runtimeUrl);
	owner = await openOrm(ownerUrl);
}, 300_000);

afterAll(async () => {
	await runtime?.close(true);
	await owner?.close(true);
	console.log(`frozen-role.test.ts: ${Math.round(performance.now() - started)} ms`);
});

describe('the runtime role', () => {
	test('owns no table, sequence, function or schema, nor the database, and holds no elevated attribute', async () => {
		const mine = await ownedByMe(runtime);
		expect(mine).toEqual({
			me: 'candlebook_app',
			relations: 0,
			functions: 0,
			schemas: 0,
			owns_database: false,
			elevated: false
		});
		// The owner is a different role, and it is the one that owns the frozen tables and the trigger function.
		const theirs = await ownedByMe(owner);
		expect(theirs.me).not.toBe(mine.me);
		expect(theirs.relations).toBeGreaterThan(0);
		expect(theirs.functions).toBeGreaterThanOrEqual(1);
	});

	test('the app itself (db.ts, DATABASE_URL) connects as a role that owns nothing', async () => {
		const app = await getOrm();
		const mine = await ownedByMe(app);
		expect(mine).toMatchObject({ relations: 0, functions: 0, schemas: 0, owns_database: false, elevated: false });
		await closeOrm();
	});

	// Each statement as the runtime role, then the same as the owner: the owner's success (rolled back)
	// shows the statement itself is sound, so the runtime role's refusal is about who it is.
	const OWNERSHIP: Array<[string, string, RegExp]> = [
		[
			'switch the freeze trigger off',
			'alter table app_relation_version disable trigger app_relation_version_no_update_or_delete',
			/must be owner of table app_relation_version/
		],
		[
			'switch every trigger of its own off',
			'alter table app_calibrator_revision disable trigger user',
			/must be owner of table app_calibrator_revision/
		],
		[
			'drop the freeze trigger',
			'drop trigger app_calibrator_value_source_no_update_or_delete on app_calibrator_value_source',
			/must be owner of (table|relation) app_calibrator_value_source/
		],
		[
			'replace the freeze function',
			`create or replace function app_refuse_frozen_change() returns trigger language plpgsql as $$ begin return new; end $$`,
			// PostgreSQL checks the schema before the function's owner: either refusal stops it.
			/permission denied for schema public|must be owner of function app_refuse_frozen_change/
		],
		[
			'drop the freeze function',
			'drop function app_refuse_frozen_change() cascade',
			/must be owner of function app_refuse_frozen_change/
		],
		['drop a frozen table', 'drop table app_relation_version cascade', /must be owner of table app_relation_version/],
		[
			'add a trigger of its own',
			'create trigger sneak before update on app_relation_version for each row execute function suppress_redundant_updates_trigger()',
			/permission denied for table app_relation_version/
		]
	];
	test.each(OWNERSHIP)('cannot %s', async (_what, sql, refusal) => {
		expect(await attempt(runtime, sql)).toMatch(refusal);
		expect(await attempt(owner, sql)).toBe(SUCCEEDED);
	});

	test('cannot truncate a frozen table, nor skip triggers by replication role, nor create objects of its own', async () => {
		for (const table of ['app_relation_version', 'app_calibrator_revision', 'app_calibrator_value_source']) {
			expect(await attempt(runtime, `truncate ${table} cascade`)).toMatch(`permission denied for table ${table}`);
			// The owner may truncate, but the statement trigger still refuses it.
			expect(await attempt(owner, `truncate ${table} cascade`)).toMatch(/frozen: TRUNCATE is not allowed/);
		}
		expect(await attempt(runtime, 'set session_replication_role = replica')).toMatch(
			/permission denied to set parameter "session_replication_role"/
		);
		expect(await attempt(runtime, 'create table app_sneak (id int)')).toMatch(/permission denied for schema public/);
		expect(await attempt(runtime, 'create schema sneak')).toMatch(/permission denied for database/);
		expect(await attempt(runtime, 'delete from mikro_orm_migrations')).toMatch(/permission denied for table/);
	});

	test('cannot update or delete a frozen row, and the rows are as they were', async () => {
		const before = await frozenCounts(runtime);
		expect(before.versions).toBeGreaterThan(0);
		expect(before.revisions).toBeGreaterThan(0);
		expect(before.sources).toBeGreaterThan(0);
		for (const table of ['app_relation_version', 'app_calibrator_revision', 'app_calibrator_value_source']) {
			expect(await attempt(runtime, `update ${table} set id = id`)).toMatch(`rows of ${table} are frozen: UPDATE`);
			expect(await attempt(runtime, `delete from ${table}`)).toMatch(`rows of ${table} are frozen: DELETE`);
		}
		expect(await frozenCounts(runtime)).toEqual(before);
	});

	test("still does the app's work: reads, writes mutable rows, adds rows, and uses the job queue", async () => {
		expect(await attempt(runtime, `update app_version_lifecycle set updated_at = now()`)).toBe(SUCCEEDED);
		expect(await attempt(runtime, `delete from app_relation_watch`)).toBe(SUCCEEDED);
		expect(
			await attempt(runtime, `insert into app_audit_event (kind, occurred_at, detail) values ('sign-out', now(), '{}')`)
		).toBe(SUCCEEDED);
		const [{ applied }] = await runtime.em
			.fork()
			.execute<{ applied: number }[]>('select count(*)::int as applied from mikro_orm_migrations');
		expect(applied).toBeGreaterThan(0);
		const boss = await startJobQueue(runtimeUrl!);
		try {
			expect(await boss.send(FIT_QUEUE, { jobId: 'role-check' })).toMatch(/^[0-9a-f-]{36}$/);
		} finally {
			await boss.stop({ graceful: false, wait: true });
		}
	});
});

describe('the owner role', () => {
	test('migrates, and what a later migration creates is the runtime role’s to read and write, not to drop', async () => {
		expect(await migrateDatabase({ ownerUrl: ownerUrl!, runtimeUrl: runtimeUrl! })).toEqual([]);
		await owner.em.execute('create table app_role_probe (id int primary key, note text)');
		try {
			expect(await attempt(runtime, `insert into app_role_probe values (1, 'a')`)).toBe(SUCCEEDED);
			await runtime.em.fork().execute(`insert into app_role_probe values (2, 'b')`);
			await runtime.em.fork().execute(`update app_role_probe set note = 'c' where id = 2`);
			await runtime.em.fork().execute(`delete from app_role_probe where id = 2`);
			expect(await attempt(runtime, 'drop table app_role_probe')).toMatch(/must be owner of table app_role_probe/);
			expect(await attempt(runtime, 'truncate app_role_probe')).toMatch(/permission denied for table app_role_probe/);
		} finally {
			await owner.em.execute('drop table app_role_probe');
		}
	});

	test('cannot undo a migration that would drop frozen rows: it refuses, and nothing changes', async () => {
		const before = await frozenCounts(owner);
		const executed = (await owner.migrator.getExecutedMigrations()).map((migration) => migration.name);
		// Later migrations may stand above it, so its own down() is called; undoing everything is one
		// transaction that reaches it and rolls back whole.
		const valueSources = new Migration20261202001000(owner.em.getDriver(), owner.config);
		await expect(valueSources.down()).rejects.toThrow(
			/Migration20261202001000 cannot be undone: app_calibrator_value_source holds \d+ frozen rows/
		);
		await expect(owner.migrator.down({ to: 0 })).rejects.toThrow(/cannot be undone/);
		// The registry's own down(), reached only once value sources are gone, guards versions and revisions.
		const registry = new Migration20261201194348(owner.em.getDriver(), owner.config);
		await expect(registry.down()).rejects.toThrow(
			/Migration20261201194348 cannot be undone: app_relation_version holds \d+ frozen rows?, app_calibrator_revision holds \d+ frozen rows?/
		);
		expect((await owner.migrator.getExecutedMigrations()).map((migration) => migration.name)).toEqual(executed);
		expect(await frozenCounts(owner)).toEqual(before);
	});
});
