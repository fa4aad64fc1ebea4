import type { MikroORM } from '@mikro-orm/postgresql';
import { chmodSync, mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { giveToServerUser, serverUserCanWrite } from '../../src/lib/server/ops/postgres-cluster';
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
