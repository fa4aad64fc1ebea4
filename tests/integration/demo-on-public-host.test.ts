import { hash } from '@node-rs/argon2';
import { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import config from '../../mikro-orm.config';
import { DEMO_ACCOUNTS, DEMO_PASSWORD } from '../../seeds/demo-accounts';
import { checkPassword } from '../../src/lib/server/accounts/account-service';
import { CalibratorSet, User } from '../../src/lib/server/entities/index';
import { Relation } from '../../src/lib/server/entities/relation.entity';
import { demoPlanFor, isLoopbackHost, seedForStart } from '../../src/lib/server/ops/demo-seeding';
import { migrateDatabase } from '../../src/lib/server/ops/migrate';

/**
 * The seeding step of `npm start` (seedForStart, with the environment start.ts passes it) on a server
 * others can reach: no demo unless CANDLEBOOK_DEMO=1, and then no account signs in with the published
 * demo password. On a database of its own (CANDLEBOOK_PUBLIC_DEMO_DATABASE_*).
 */
const runtimeUrl = process.env.CANDLEBOOK_PUBLIC_DEMO_DATABASE_URL;
const ownerUrl = process.env.CANDLEBOOK_PUBLIC_DEMO_DATABASE_OWNER_URL;
const PUBLIC_HOST = { HOST: '0.0.0.0', ORIGIN: 'https://candlebook.example.org' };
const started = performance.now();
let orm: MikroORM;

async function startSeeding(env: Record<string, string>) {
	const printed: string[] = [];
	const plan = await seedForStart(runtimeUrl!, env, (line) => printed.push(line));
	// `[candlebook]   address  password`, one line per account given a password.
	const passwords = new Map(
		printed.flatMap((line) => {
			const match = /^\[candlebook\] {3}(\S+) {2}(\S+)$/.exec(line);
			return match ? [[match[1], match[2]] as const] : [];
		})
	);
	return { plan, printed, passwords };
}

async function counts() {
	const em = orm.em.fork();
	return {
		users: await em.count(User, {}),
		sets: await em.count(CalibratorSet, {}),
		relations: await em.count(Relation, {})
	};
}

let client = 0;
async function signsIn(email: string, password: string): Promise<boolean> {
	client += 1;
	return (await checkPassword(orm.em.fork(), email, password, `198.51.100.${client}`)).ok;
}

beforeAll(async () => {
	if (!runtimeUrl || !ownerUrl) {
		throw new Error(
			'CANDLEBOOK_PUBLIC_DEMO_DATABASE_URL/_OWNER_URL are not set: run integration tests through `npm test`'
		);
	}
	await migrateDatabase({ ownerUrl, runtimeUrl });
	orm = await MikroORM.init({ ...config, clientUrl: runtimeUrl, debug: false });
});

afterAll(async () => {
	await orm?.close(true);
	console.log(`demo-on-public-host.test.ts: ${Math.round(performance.now() - started)} ms`);
});

describe('which hosts count as loopback', () => {
	test('only addresses this machine alone can reach', () => {
		for (const host of ['127.0.0.1', '127.1.2.3', 'localhost', '::1', '[::1]', '0:0:0:0:0:0:0:1', '::ffff:127.0.0.1']) {
			expect(isLoopbackHost(host), host).toBe(true);
		}
		for (const host of ['0.0.0.0', '::', '192.0.2.10', '2001:db8::1', 'candlebook.example.org', '10.0.0.1']) {
			expect(isLoopbackHost(host), host).toBe(false);
		}
	});

	test('the demo plan follows HOST unless CANDLEBOOK_DEMO says otherwise', () => {
		expect(demoPlanFor({})).toBe('published');
		expect(demoPlanFor({ HOST: '127.0.0.1' })).toBe('published');
		expect(demoPlanFor({ HOST: '127.0.0.1', CANDLEBOOK_DEMO: '0' })).toBe('none');
		expect(demoPlanFor(PUBLIC_HOST)).toBe('none');
		expect(demoPlanFor({ ...PUBLIC_HOST, CANDLEBOOK_DEMO: '1' })).toBe('random');
		expect(() => demoPlanFor({ ...PUBLIC_HOST, CANDLEBOOK_DEMO: 'yes' })).toThrow(/CANDLEBOOK_DEMO must be 1 .* or 0/);
	});
});

describe('npm start on a host others can reach', () => {
	test('without CANDLEBOOK_DEMO seeds neither the demo accounts nor the demo registry, and says how to', async () => {
		const { plan, printed, passwords } = await startSeeding(PUBLIC_HOST);
		expect(plan).toBe('none');
		expect(await counts()).toEqual({ users: 0, sets: 0, relations: 0 });
		expect(passwords.size).toBe(0);
		expect(printed.join('\n')).toMatch(
			/HOST 0\.0\.0\.0 is reachable by others: the invented demo is not seeded \(CANDLEBOOK_DEMO=1 seeds it\)/
		);
	});

	let issued = new Map<string, string>();
	test('with CANDLEBOOK_DEMO=1 seeds the demo, and each account signs in only with the password printed for it', async () => {
		const { plan, passwords } = await startSeeding({ ...PUBLIC_HOST, CANDLEBOOK_DEMO: '1' });
		expect(plan).toBe('random');
		issued = passwords;
		const seeded = await counts();
		expect(seeded.users).toBe(DEMO_ACCOUNTS.length);
		expect(seeded.relations).toBeGreaterThanOrEqual(5);
		expect([...passwords.keys()].sort()).toEqual(DEMO_ACCOUNTS.map((account) => account.email).sort());
		expect(new Set(passwords.values()).size).toBe(DEMO_ACCOUNTS.length);
		for (const [email, password] of passwords) {
			expect(password).not.toBe(DEMO_PASSWORD);
			expect(await signsIn(email, DEMO_PASSWORD), `${email} with the published password`).toBe(false);
			expect(await signsIn(email, password), `${email} with its printed password`).toBe(true);
		}
	}, 300_000);

	test('a second start prints no password again and adds nothing; the printed ones still work', async () => {
		const before = await counts();
		const { passwords } = await startSeeding({ ...PUBLIC_HOST, CANDLEBOOK_DEMO: '1' });
		expect(passwords.size).toBe(0);
		expect(await counts()).toEqual(before);
		const [email, password] = [...issued][0];
		expect(await signsIn(email, password)).toBe(true);
	}, 300_000);

	test('a demo account left with the published password by a loopback start gets a new one printed', async () => {
		const [email] = [...issued][0];
		// What a loopback start leaves: the published password.
		await orm.em.fork().nativeUpdate(User, { email }, { passwordHash: await hash(DEMO_PASSWORD) });
		expect(await signsIn(email, DEMO_PASSWORD)).toBe(true);
		const { passwords } = await startSeeding(PUBLIC_HOST);
		expect([...passwords.keys()]).toEqual([email]);
		expect(await signsIn(email, DEMO_PASSWORD)).toBe(false);
		expect(await signsIn(email, passwords.get(email)!)).toBe(true);
	});
});
