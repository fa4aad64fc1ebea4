import { isIP } from 'node:net';
import type { DemoCredential } from '../../../../seeds/demo-accounts';
import { replacePublishedDemoPasswords } from '../../../../seeds/DemoAccountsSeeder';
import { seedDemo, withOrm } from './migrate';

/**
 * Whether `npm start` loads the invented demo, and with which passwords. On loopback only this
 * machine can sign in, so the demo comes with its published password as always. Where others can
 * reach the server the demo is left out unless CANDLEBOOK_DEMO=1 asks for it, and then every demo
 * account gets a random password shown once on the console. CANDLEBOOK_DEMO=0 leaves it out anywhere.
 */
export type DemoPlan = 'published' | 'random' | 'none';

/** 127.0.0.0/8, ::1 (also IPv4-mapped) and `localhost`: addresses only this machine can reach. */
export function isLoopbackHost(host: string): boolean {
	const bare = host
		.trim()
		.toLowerCase()
		.replace(/^\[(.*)\]$/, '$1');
	if (bare === 'localhost' || bare.endsWith('.localhost')) return true;
	const ipv4 = bare.startsWith('::ffff:') ? bare.slice('::ffff:'.length) : bare;
	if (isIP(ipv4) === 4) return ipv4.startsWith('127.');
	return isIP(bare) === 6 && /^(0{0,4}:){2,7}0{0,3}1$/.test(bare);
}

/** The plan for the host the server will listen on (HOST, default 127.0.0.1, as serverEnvironment). */
export function demoPlanFor(env: Record<string, string | undefined>): DemoPlan {
	const asked = env.CANDLEBOOK_DEMO?.trim();
	if (asked && asked !== '0' && asked !== '1') {
		throw new Error(`CANDLEBOOK_DEMO must be 1 (load the invented demo) or 0 (leave it out), got "${asked}"`);
	}
	if (asked === '0') return 'none';
	if (isLoopbackHost(env.HOST ?? '127.0.0.1')) return 'published';
	return asked === '1' ? 'random' : 'none';
}

function printIssued(issued: DemoCredential[], print: (line: string) => void): void {
	if (issued.length === 0) return;
	print(
		'[candlebook] demo accounts and their passwords (shown this once; the published demo password does not work here):'
	);
	for (const { email, password } of issued) print(`[candlebook]   ${email}  ${password}`);
}

/**
 * The seeding step of `npm start`, run as the runtime role after the migrations. A demo account left
 * from a loopback run never keeps the published password on a server others can reach.
 */
export async function seedForStart(
	runtimeUrl: string,
	env: Record<string, string | undefined>,
	print: (line: string) => void = console.log
): Promise<DemoPlan> {
	const plan = demoPlanFor(env);
	let issued: DemoCredential[] = [];
	if (plan === 'none') {
		await withOrm(runtimeUrl, (orm) => replacePublishedDemoPasswords(orm.em.fork(), issued));
		print(
			env.CANDLEBOOK_DEMO === '0'
				? '[candlebook] CANDLEBOOK_DEMO=0: the invented demo is not seeded'
				: `[candlebook] HOST ${env.HOST} is reachable by others: the invented demo is not seeded (CANDLEBOOK_DEMO=1 seeds it)`
		);
	} else {
		issued = await seedDemo(runtimeUrl, plan);
	}
	printIssued(issued, print);
	return plan;
}
