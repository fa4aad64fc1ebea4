import { MikroORM } from '@mikro-orm/postgresql';
import { chmodSync, mkdirSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import config from '../../mikro-orm.config';
import { openLocalDatabase, type LocalState } from '../../src/lib/server/ops/local-database';
import { migrateDatabase } from '../../src/lib/server/ops/migrate';
import {
	freePort,
	giveToServerUser,
	PostgresCluster,
	quoteLiteral,
	randomSecret,
	serverUserCanWrite,
	writeSecretJson
} from '../../src/lib/server/ops/postgres-cluster';
import { isRoot } from '../../src/lib/server/ops/system-packages';
import { openTestOrm } from '../support/database';

let orm: MikroORM;
beforeAll(async () => {
	orm = await openTestOrm();
});
afterAll(async () => {
	await orm.close(true);
});

describe('the project-owned PostgreSQL', () => {
	test('listens on 127.0.0.1 only', async () => {
		const [row] = await orm.em.fork().getConnection().execute<{ listen_addresses: string }[]>('show listen_addresses');
		expect(row.listen_addresses).toBe('127.0.0.1');
	});

	test('runs as the postgres system user, not as root', async () => {
		const [row] = await orm.em
			.fork()
			.getConnection()
			.execute<{ owner: string }[]>(
				`select pg_catalog.pg_get_userbyid(datdba) as owner from pg_database where datname = 'postgres'`
			);
		expect(row.owner).toBe('postgres');
	});

	test.runIf(isRoot())('a cluster folder under a root-only parent is detected as unreachable', () => {
		const parent = mkdtempSync(join(tmpdir(), 'candlebook-reach-'));
		try {
			const cluster = join(parent, 'postgres');
			mkdirSync(cluster);
			giveToServerUser(cluster);
			chmodSync(parent, 0o700);
			expect(serverUserCanWrite(cluster)).toBe(false);
			chmodSync(parent, 0o755);
			expect(serverUserCanWrite(cluster)).toBe(true);
		} finally {
			rmSync(parent, { recursive: true, force: true });
		}
	});
});

describe('the local cluster of `npm start`, made by a version with one role', () => {
	test('gains a runtime role that owns nothing, while the old role keeps the tables and migrates', async () => {
		const started = performance.now();
		const stateDir = mkdtempSync(join(tmpdir(), 'candlebook-upgrade-'));
		chmodSync(stateDir, 0o755);
		const previous = process.env.CANDLEBOOK_STATE_DIR;
		process.env.CANDLEBOOK_STATE_DIR = stateDir;
		// What an older `npm start` left: one role owning the database and a table, and its state file.
		const old = {
			role: 'candlebook',
			password: randomSecret(),
			database: 'candlebook',
			superuserPassword: randomSecret()
		};
		const cluster = new PostgresCluster({
			dataDir: join(stateDir, 'postgres', 'data'),
			runDir: join(stateDir, 'postgres', 'run'),
			port: await freePort(),
			throwaway: false,
			superuserPassword: old.superuserPassword
		});
		let database: Awaited<ReturnType<typeof openLocalDatabase>> | undefined;
		try {
			cluster.initialise();
			cluster.start();
			cluster.psql(`CREATE ROLE candlebook WITH LOGIN PASSWORD ${quoteLiteral(old.password)}`);
			cluster.psql('CREATE DATABASE candlebook OWNER candlebook');
			cluster.psql('SET ROLE candlebook; CREATE TABLE app_from_before (id int primary key)', 'candlebook');
			cluster.stop();
			writeSecretJson(join(stateDir, 'database.json'), { ...old, port: cluster.options.port });

			database = await openLocalDatabase();
			const state = JSON.parse(readFileSync(join(stateDir, 'database.json'), 'utf8')) as LocalState;
			expect(state.role).toBe('candlebook');
			expect(state.runtimeRole).toBe('candlebook_app');
			expect(await migrateDatabase({ ownerUrl: database.ownerUrl, runtimeUrl: database.url })).toContain(
				'Migration20261201194348'
			);
			// Both roles sign in with their passwords (scram-sha-256 on this cluster, unlike the throwaway one).
			const runtime = await MikroORM.init({ ...config, clientUrl: database.url, debug: false });
			try {
				const connection = runtime.em.getConnection();
				const [row] = await connection.execute(
					`select current_user as me,
					        (select count(*) from pg_class where relowner = current_user::regrole)::int as owned,
					        (select tableowner from pg_tables where tablename = 'app_relation_version') as version_owner,
					        (select tableowner from pg_tables where tablename = 'app_from_before') as old_owner`
				);
				expect(row).toEqual({ me: 'candlebook_app', owned: 0, version_owner: 'candlebook', old_owner: 'candlebook' });
				await connection.execute('insert into app_from_before values (1)');
				await expect(connection.execute('drop table app_from_before')).rejects.toThrow(/must be owner of table/);
				await expect(connection.execute('alter table app_relation_version disable trigger all')).rejects.toThrow(
					/must be owner of table app_relation_version/
				);
			} finally {
				await runtime.close(true);
			}
		} finally {
			database?.stop();
			cluster.stop();
			if (previous === undefined) delete process.env.CANDLEBOOK_STATE_DIR;
			else process.env.CANDLEBOOK_STATE_DIR = previous;
			rmSync(stateDir, { recursive: true, force: true });
			console.log(`local cluster upgrade: ${Math.round(performance.now() - started)} ms`);
		}
	}, 120_000);
});
