import type { MikroORM } from '@mikro-orm/postgresql';
import { median } from 'simple-statistics';
import { expect, test, type Browser } from '@playwright/test';
import { OneTimeLink } from '../../src/lib/server/entities/index';
import {
	createBearerToken,
	createGroupRow,
	createPerson,
	createSessionCookie,
	openOrm,
	uniqueSlug
} from './support/accounts';
import { startAppInstance, type AppInstance } from './support/app-instance';
import { capturedMailsTo, capturedMailTo } from './support/captured-mail';

/**
 * Account abuse over real HTTP against the built app: the shared test server, and a second instance
 * of our own that takes the client address from X-Forwarded-For (ADDRESS_HEADER, as behind a proxy),
 * so each request can come from a client of its choosing and two instances share one database.
 */
const shared = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;
const PASSWORD = 'browser hardening password';
const started = performance.now();
// Several browsers and a second app instance per test, on a machine shared with other work.
test.describe.configure({ timeout: 90_000 });
let second: string;
let instance: AppInstance | undefined;
let orm: MikroORM;

test.beforeAll(async () => {
	orm = await openOrm();
	instance = await startAppInstance({
		ADDRESS_HEADER: 'x-forwarded-for',
		XFF_DEPTH: '1',
		CANDLEBOOK_ANON_RATE_LIMIT: '1000000/60',
		CANDLEBOOK_IN_PROCESS_WORKER: 'false'
	});
	second = instance.origin;
});

test.afterAll(async () => {
	await orm.close(true);
	await instance?.stop();
	console.log(`accounts-hardening (browser): ${Math.round(performance.now() - started)} ms`);
});

/** A client address nobody else in this run uses: 10.<random>.x.y, counted up. */
const CLIENT_BASE = 20 + Math.floor(Math.random() * 200);
let clientCounter = 0;
const freshClient = () => {
	clientCounter++;
	return `10.${CLIENT_BASE}.${clientCounter >> 8}.${clientCounter & 255}`;
};

interface ActionAnswer {
	httpStatus: number;
	/** The action's own status (400, 429…) from SvelteKit's JSON answer to an enhanced form. */
	status: number;
	body: string;
	ms: number;
}

/** Posts a form action as `use:enhance` does and times the answer. */
async function postAction(
	base: string,
	path: string,
	fields: Record<string, string>,
	headers: Record<string, string> = {}
): Promise<ActionAnswer> {
	const t0 = performance.now();
	const response = await fetch(`${base}${path}`, {
		method: 'POST',
		headers: {
			'content-type': 'application/x-www-form-urlencoded',
			origin: base,
			accept: 'application/json',
			'x-sveltekit-action': 'true',
			...headers
		},
		body: new URLSearchParams(fields),
		redirect: 'manual'
	});
	const body = await response.text();
	const ms = performance.now() - t0;
	return { httpStatus: response.status, status: (JSON.parse(body) as { status: number }).status, body, ms };
}

/** The same answer with the address itself masked: what differs then tells who has an account. */
const masked = (answer: { httpStatus: number; body: string }, address: string) => ({
	httpStatus: answer.httpStatus,
	body: answer.body.split(address).join('<address>')
});

/**
 * Ten rounds of known then unknown address, alternating; asserts masked status and body are identical
 * every time and that the median times agree within a generous factor of two (printed).
 */
async function expectAlike(
	label: string,
	known: (i: number) => Promise<{ answer: ActionAnswer; address: string }>,
	unknown: (i: number) => Promise<{ answer: ActionAnswer; address: string }>
) {
	const times = { known: [] as number[], unknown: [] as number[] };
	for (let i = 0; i < 10; i++) {
		// Which goes first alternates, so mail still leaving from the round before slows both alike.
		const order = i % 2 ? [known, unknown] : [unknown, known];
		const earlier = await order[0](i);
		const later = await order[1](i);
		const [a, b] = i % 2 ? [earlier, later] : [later, earlier];
		expect(masked(b.answer, b.address), `${label}, round ${i}`).toEqual(masked(a.answer, a.address));
		times.known.push(a.answer.ms);
		times.unknown.push(b.answer.ms);
	}
	const ratio = median(times.unknown) / median(times.known);
	console.log(
		`${label}: median known ${median(times.known).toFixed(1)} ms, unknown ${median(times.unknown).toFixed(1)} ms, ratio ${ratio.toFixed(2)}`
	);
	expect(ratio).toBeGreaterThan(0.5);
	expect(ratio).toBeLessThan(2);
}

async function signIn(browser: Browser, email: string) {
	const context = await browser.newContext({ baseURL: shared });
	const page = await context.newPage();
	await page.goto('/sign-in');
	await page.getByLabel('E-mail address').fill(email);
	await page.getByLabel('Password').fill(PASSWORD);
	await page.getByRole('button', { name: 'Sign in' }).click();
	await expect(page).toHaveURL(/\/account$/);
	return { context, page };
}

const tokenAnswers = async (token: string) =>
	(await fetch(`${shared}/api/v1/me`, { headers: { authorization: `Bearer ${token}` } })).status;

test('changing the password in one browser signs the other out and revokes the token; the page says so before and after', async ({
	browser
}) => {
	const person = await createPerson(orm, { label: 'two browsers', roles: ['reader'], password: PASSWORD });
	const token = await createBearerToken(orm, person.id, ['read:private']);
	const one = await signIn(browser, person.email);
	const other = await signIn(browser, person.email);
	expect(await tokenAnswers(token)).toBe(200);

	await expect(
		one.page.getByText('Changing your password signs you out everywhere else and revokes your API tokens.')
	).toBeVisible();
	await one.page.getByLabel('Current password').fill(PASSWORD);
	await one.page.getByLabel('New password', { exact: true }).fill('a changed hardening password');
	await one.page.getByLabel('New password again').fill('a changed hardening password');
	await one.page.getByRole('button', { name: 'Change password' }).click();
	await expect(
		one.page.getByText(
			'Password changed. You are signed out everywhere else, and your API tokens are revoked (other sessions ended: 1; tokens revoked: 1).'
		)
	).toBeVisible();

	await other.page.reload();
	await expect(other.page).toHaveURL(/\/sign-in\?next=%2Faccount$/);
	expect(await tokenAnswers(token)).toBe(401);
	await one.page.reload();
	await expect(one.page.getByRole('heading', { level: 1 })).toHaveText(person.displayName);
	await one.context.close();
	await other.context.close();
});

test('a reset through the mailed link signs out every browser and revokes the token; both pages say so', async ({
	browser
}) => {
	const person = await createPerson(orm, { label: 'resetting', roles: ['reader'], password: PASSWORD });
	const token = await createBearerToken(orm, person.id, []);
	const signedIn = await signIn(browser, person.email);

	const context = await browser.newContext({
		baseURL: second,
		extraHTTPHeaders: { 'x-forwarded-for': freshClient() }
	});
	const page = await context.newPage();
	await page.goto('/reset-password');
	await page.getByLabel('E-mail address').fill(person.email);
	await page.getByRole('button', { name: 'Send the link' }).click();
	await expect(page.getByText(`If an account uses ${person.email}`)).toBeVisible();
	const link = /http:\/\/\S+\/reset-password\/new\?token=[a-z0-9]+/.exec((await capturedMailTo(person.email)).text)![0];

	await page.goto(link);
	await expect(
		page.getByText('Setting a new password signs you out everywhere and revokes your API tokens.')
	).toBeVisible();
	await page.getByLabel('New password').fill('a reset hardening password');
	await page.getByLabel('The same password again').fill('a reset hardening password');
	await page.getByRole('button', { name: 'Set new password' }).click();
	await expect(page.getByText('Every session has ended and your API tokens are revoked')).toBeVisible();

	await signedIn.page.reload();
	await expect(signedIn.page).toHaveURL(/\/sign-in\?next=%2Faccount$/);
	expect(await tokenAnswers(token)).toBe(401);
	await signedIn.context.close();
	await context.close();
});

test('fifty parallel wrong guesses at one account, over HTTP to two app instances, get five evaluations', async () => {
	const person = await createPerson(orm, { label: 'guessed', roles: ['reader'], password: PASSWORD });
	const t0 = performance.now();
	const answers = await Promise.all(
		Array.from({ length: 50 }, (_, i) =>
			i % 2
				? postAction(
						second,
						'/sign-in',
						{ email: person.email, password: `guess ${i}` },
						{ 'x-forwarded-for': freshClient() }
					)
				: postAction(shared, '/sign-in', { email: person.email, password: `guess ${i}` })
		)
	);
	const evaluated = answers.filter((answer) => answer.status === 400).length;
	const refused = answers.filter((answer) => answer.status === 429).length;
	console.log(
		`50 parallel guesses over HTTP: ${evaluated} evaluated, ${refused} refused in ${Math.round(performance.now() - t0)} ms`
	);
	expect({ evaluated, refused }).toEqual({ evaluated: 5, refused: 45 });
	// Held, even with the right password.
	const right = await postAction(
		second,
		'/sign-in',
		{ email: person.email, password: PASSWORD },
		{ 'x-forwarded-for': freshClient() }
	);
	expect(right.status).toBe(429);
});

test('reset requests are throttled per address and per client, with the same neutral answer', async () => {
	const person = await createPerson(orm, { label: 'reset flood', roles: ['reader'], password: PASSWORD });
	const answers = await Promise.all(
		Array.from({ length: 6 }, () =>
			postAction(second, '/reset-password', { email: person.email }, { 'x-forwarded-for': freshClient() })
		)
	);
	expect(new Set(answers.map((answer) => JSON.stringify(masked(answer, person.email)))).size).toBe(1);
	expect(answers[0].status).toBe(200);
	const links = () => orm.em.fork().count(OneTimeLink, { user: person.id, purpose: 'password-reset' });
	// Links are made after the answer, so the count is awaited rather than read at once.
	await expect.poll(links).toBe(3);
	await expect.poll(() => capturedMailsTo(person.email).length).toBe(3);

	const client = freshClient();
	const other = await createPerson(orm, { label: 'reset late', roles: ['reader'], password: PASSWORD });
	const nobody = `${uniqueSlug('nobody')}@browser.test`;
	const first = await postAction(second, '/reset-password', { email: nobody }, { 'x-forwarded-for': client });
	for (let i = 0; i < 9; i++) {
		await postAction(
			second,
			'/reset-password',
			{ email: `${uniqueSlug('nobody')}@browser.test` },
			{ 'x-forwarded-for': client }
		);
	}
	// The eleventh from this client, for an address with an account: the same answer, and no link.
	const eleventh = await postAction(second, '/reset-password', { email: other.email }, { 'x-forwarded-for': client });
	expect(masked(eleventh, other.email)).toEqual(masked(first, nobody));
	// Given time to appear, no link does.
	await new Promise((resolve) => setTimeout(resolve, 1000));
	expect(await orm.em.fork().count(OneTimeLink, { user: other.id, purpose: 'password-reset' })).toBe(0);
	await postAction(second, '/reset-password', { email: other.email }, { 'x-forwarded-for': freshClient() });
	await expect.poll(() => orm.em.fork().count(OneTimeLink, { user: other.id, purpose: 'password-reset' })).toBe(1);
});

test.describe('known and unknown addresses get the same status and body, in alike time', () => {
	// Ten rounds of HTTP requests each, on a machine shared with other work.
	test.describe.configure({ timeout: 120_000 });
	let known: { email: string }[];
	const stranger = (i: number) => `${uniqueSlug(`stranger-${i}`)}@browser.test`;

	test.beforeAll(async () => {
		known = await Promise.all(
			Array.from({ length: 10 }, (_, i) =>
				createPerson(orm, { label: `known ${i}`, roles: ['reader'], password: PASSWORD })
			)
		);
	});

	test('sign-in', async () => {
		await expectAlike(
			'sign-in over HTTP',
			async (i) => ({
				address: known[i].email,
				answer: await postAction(
					second,
					'/sign-in',
					{ email: known[i].email, password: 'not it' },
					{ 'x-forwarded-for': freshClient() }
				)
			}),
			async (i) => {
				const address = stranger(i);
				return {
					address,
					answer: await postAction(
						second,
						'/sign-in',
						{ email: address, password: 'not it' },
						{ 'x-forwarded-for': freshClient() }
					)
				};
			}
		);
	});

	test('password reset request', async () => {
		await expectAlike(
			'password reset over HTTP',
			async (i) => ({
				address: known[i].email,
				answer: await postAction(
					second,
					'/reset-password',
					{ email: known[i].email },
					{ 'x-forwarded-for': freshClient() }
				)
			}),
			async (i) => {
				const address = stranger(i);
				return {
					address,
					answer: await postAction(second, '/reset-password', { email: address }, { 'x-forwarded-for': freshClient() })
				};
			}
		);
	});

	test('e-mail change', async () => {
		const mover = await createPerson(orm, { label: 'mover', roles: ['reader'], password: PASSWORD });
		const moverCookie = { cookie: `candlebook_session=${await createSessionCookie(orm, mover.id)}` };
		await expectAlike(
			'e-mail change over HTTP',
			async (i) => ({
				address: known[i].email,
				answer: await postAction(second, '/account?/email', { email: known[i].email }, moverCookie)
			}),
			async (i) => {
				const address = stranger(i);
				return { address, answer: await postAction(second, '/account?/email', { email: address }, moverCookie) };
			}
		);
	});

	test('adding a group member, by form and over the API; an unknown address is mailed an invitation', async () => {
		const group = await createGroupRow(orm, uniqueSlug('hardening'));
		const manager = await createPerson(orm, {
			label: 'manager',
			roles: ['reader'],
			groups: [{ group, standing: 'manager' }]
		});
		const managerCookie = { cookie: `candlebook_session=${await createSessionCookie(orm, manager.id)}` };
		const invited: string[] = [];
		await expectAlike(
			'adding a member (form) over HTTP',
			async (i) => ({
				address: known[i].email,
				answer: await postAction(second, `/groups/${group}?/addMember`, { email: known[i].email }, managerCookie)
			}),
			async (i) => {
				const address = stranger(i);
				invited.push(address);
				return {
					address,
					answer: await postAction(second, `/groups/${group}?/addMember`, { email: address }, managerCookie)
				};
			}
		);

		const bearer = await createBearerToken(orm, manager.id, ['write']);
		const apiAdd = async (email: string) => {
			const t0 = performance.now();
			const response = await fetch(`${second}/api/v1/groups/${group}/members`, {
				method: 'POST',
				headers: { authorization: `Bearer ${bearer}`, 'content-type': 'application/json' },
				body: JSON.stringify({ email, standing: 'member' })
			});
			const body = await response.text();
			return { httpStatus: response.status, status: response.status, body, ms: performance.now() - t0 };
		};
		await expectAlike(
			'adding a member (API) over HTTP',
			async (i) => ({ address: known[i].email, answer: await apiAdd(known[i].email) }),
			async (i) => {
				const address = stranger(i);
				invited.push(address);
				return { address, answer: await apiAdd(address) };
			}
		);
		expect((await apiAdd(stranger(99))).httpStatus).toBe(201);

		// Each unknown address was invited into the group by mail.
		for (const address of [invited[0], invited.at(-1)!]) {
			const invitation = await capturedMailTo(address);
			expect(invitation.subject).toBe('You are invited to Candlebook');
			expect(invitation.text).toMatch(/\/invitation\?token=[a-z0-9]+/);
		}
	});
});
