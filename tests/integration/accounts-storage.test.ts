import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { Session, User } from '../../src/lib/server/entities/index';
import { checkReadiness } from '../../src/lib/server/readiness';
import { openTestOrm } from '../support/database';

let orm: MikroORM;

beforeAll(async () => {
	orm = await openTestOrm();
});

afterAll(async () => {
	await orm.close(true);
});

describe('accounts in PostgreSQL', () => {
	test('a user written in one EntityManager is read back in a fresh one', async () => {
		const email = `reader-${crypto.randomUUID()}@example.test`;
		const writer = orm.em.fork();
		const user = writer.create(User, {
			email,
			displayName: 'Test Reader',
			affiliation: null,
			orcid: null,
			roles: ['reader', 'curator']
		});
		await writer.flush();

		const reader = orm.em.fork();
		const found = await reader.findOneOrFail(User, { email });
		expect(found.id).toBe(user.id);
		expect(found).not.toBe(user);
		expect(found.roles).toEqual(['reader', 'curator']);
		expect(found.createdAt).toBeInstanceOf(Date);
	});

	test('e-mail addresses are unique at the database level', async () => {
		const email = `dup-${crypto.randomUUID()}@example.test`;
		const em = orm.em.fork();
		em.create(User, { email, displayName: 'First', affiliation: null, orcid: null });
		await em.flush();
		const second = orm.em.fork();
		second.create(User, { email, displayName: 'Second', affiliation: null, orcid: null });
		await expect(second.flush()).rejects.toThrow(/unique/i);
	});

	test('deleting a user removes its sessions (cascade in the schema)', async () => {
		const em = orm.em.fork();
		const user = em.create(User, {
			email: `s-${crypto.randomUUID()}@example.test`,
			displayName: 'S',
			affiliation: null,
			orcid: null
		});
		const id = 'a'.repeat(64);
		em.create(Session, { id, user, expiresAt: new Date(Date.now() + 60_000) });
		await em.flush();
		await orm.em.fork().nativeDelete(User, { id: user.id });
		expect(await orm.em.fork().count(Session, { id })).toBe(0);
	});

	test('readiness reports the database reachable and no migration pending', async () => {
		const readiness = await checkReadiness(orm.em.fork());
		expect(readiness.checks.database.ok).toBe(true);
		expect(readiness.checks.migrations).toEqual({ ok: true });
		expect(readiness.ready).toBe(true);
	});
});
