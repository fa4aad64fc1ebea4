import type { MikroORM } from '@mikro-orm/postgresql';
import { median } from 'simple-statistics';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import {
	acceptInvitation,
	changePassword,
	checkPassword,
	invite,
	requestEmailChange,
	requestPasswordReset,
	resetPassword,
	setPassword,
	type SignInResult
} from '../../src/lib/server/accounts/account-service';
import { addOrInviteMember, createGroup, standingIn } from '../../src/lib/server/accounts/group-service';
import { authenticateToken, createToken } from '../../src/lib/server/accounts/token-service';
import { luciaFor } from '../../src/lib/server/auth/lucia';
import { startSession, validateSessionToken } from '../../src/lib/server/auth/session';
import { AttemptThrottle, PASSWORD_RESET_LIMITS, SIGN_IN_LIMITS } from '../../src/lib/server/auth/throttle';
import { AuditEvent, OneTimeLink, User } from '../../src/lib/server/entities/index';
import { startMailCatcher, type MailCatcher } from '../../src/lib/server/mail/capture-server';
import type { CapturedMail } from '../../src/lib/server/mail/captured-mail';
import { openTestOrm } from '../support/database';

/**
 * Account abuse, tried against the real thing: PostgreSQL for sessions, tokens and attempt counts,
 * the fake SMTP server for mail. Each test is one way someone could get in or find out who has an
 * account.
 */
const ORIGIN = 'http://127.0.0.1:9';
const PASSWORD = 'a long enough password';
const started = performance.now();

let orm: MikroORM;
let mail: MailCatcher;

beforeAll(async () => {
	mail = await startMailCatcher();
	process.env.SMTP_URL = mail.url;
	orm = await openTestOrm();
});

afterAll(async () => {
	await orm.close(true);
	await mail.close();
	console.log(`accounts-hardening (integration): ${Math.round(performance.now() - started)} ms`);
});

const em = () => orm.em.fork();
const tag = () => crypto.randomUUID().slice(0, 8);
const unique = (label: string) => `${label}-${tag()}@example.test`;
/** A client address of its own per test, so counts never leak from one test into another. */
const clientAddress = () => `198.51.${Math.floor(Math.random() * 250)}.${Math.floor(Math.random() * 250)}`;
const audit = (address: string) => ({ actorId: null, clientAddress: address });

async function activeUser(label: string) {
	const { user } = await invite(
		em(),
		{ email: unique(label), displayName: label, roles: ['reader'], groups: [] },
		ORIGIN,
		audit('127.0.0.1'),
		false
	);
	await setPassword(em(), user.id, PASSWORD, audit('127.0.0.1'));
	return user;
}

/**
 * Runs `known` and `unknown` alternately `rounds` times and returns the median milliseconds of each and
 * their ratio, printed. The ratio bound is generous (0.5–2): the point is that neither path does
 * clearly more work, not a benchmark.
 */
async function timeAlike(
	label: string,
	rounds: number,
	known: (i: number) => Promise<unknown>,
	unknown: (i: number) => Promise<unknown>
) {
	const knownMs: number[] = [];
	const unknownMs: number[] = [];
	for (let i = 0; i < rounds; i++) {
		const pairs = [
			[known, knownMs],
			[unknown, unknownMs]
		] as const;
		// Which goes first alternates, so background work left from the round before slows both alike.
		for (const [run, into] of i % 2 ? pairs : [...pairs].reverse()) {
			const t0 = performance.now();
			const answer = await run(i);
			into.push(performance.now() - t0);
			// Mail that leaves after the answer is not part of it; let it finish before the next round.
			await (answer as { delivery?: Promise<void> } | undefined)?.delivery;
		}
	}
	const result = { known: median(knownMs), unknown: median(unknownMs) };
	const ratio = result.unknown / result.known;
	console.log(
		`${label}: median known ${result.known.toFixed(2)} ms, unknown ${result.unknown.toFixed(2)} ms, ratio ${ratio.toFixed(2)}`
	);
	return ratio;
}

describe('a password change or reset ends every other way in', () => {
	test('changing the password ends every other session and revokes every API token; this session stays', async () => {
		const user = await activeUser('changer');
		const lucia = luciaFor(orm);
		const here = await startSession(lucia, user.id, { userAgent: 'here', clientAddress: null });
		const elsewhere = await startSession(lucia, user.id, { userAgent: 'elsewhere', clientAddress: null });
		const { secret } = await createToken(
			em(),
			user.id,
			{ name: 'pipeline', scopes: [], lifetimeDays: null },
			audit('127.0.0.1')
		);
		expect(await authenticateToken(em(), secret)).not.toBeNull();

		const wrong = await changePassword(
			em(),
			user.id,
			'not the password',
			'a new password here',
			audit('127.0.0.1'),
			here.session.id
		);
		expect(wrong).toEqual({ changed: false });
		expect((await validateSessionToken(lucia, elsewhere.token)).session).not.toBeNull();

		const change = await changePassword(
			em(),
			user.id,
			PASSWORD,
			'a new password here',
			audit('127.0.0.1'),
			here.session.id
		);
		expect(change).toEqual({ changed: true, sessionsEnded: 1, tokensRevoked: 1 });
		expect((await validateSessionToken(lucia, here.token)).session).not.toBeNull();
		expect((await validateSessionToken(lucia, elsewhere.token)).session).toBeNull();
		expect(await authenticateToken(em(), secret)).toBeNull();
		const event = await em().findOneOrFail(
			AuditEvent,
			{ kind: 'password-set', subject: user.id },
			{ orderBy: { id: 'desc' } }
		);
		expect(event.detail).toEqual({ sessionsEnded: 1, tokensRevoked: 1 });
	});

	test('a reset through the mailed link ends every session and revokes every API token', async () => {
		const user = await activeUser('forgetful');
		const lucia = luciaFor(orm);
		const session = await startSession(lucia, user.id, { userAgent: null, clientAddress: null });
		const { secret } = await createToken(
			em(),
			user.id,
			{ name: 'ci', scopes: ['read:private'], lifetimeDays: 30 },
			audit('127.0.0.1')
		);
		await (
			await requestPasswordReset(em(), user.email, ORIGIN, audit(clientAddress()))
		).delivery;
		const message = await mail.waitFor(
			(m) => m.to.includes(user.email) && m.subject.includes('new Candlebook password')
		);
		const token = /\/reset-password\/new\?token=([a-z0-9]+)/.exec(message.text)![1];
		expect(await resetPassword(em(), token, 'the password after reset', audit('127.0.0.1'))).not.toBeNull();
		expect((await validateSessionToken(lucia, session.token)).session).toBeNull();
		expect(await authenticateToken(em(), secret)).toBeNull();
	});
});

describe('sign-in throttling holds under parallel guesses', () => {
	const tally = (results: SignInResult[]) => ({
		evaluated: results.filter((r) => !r.ok && r.reason === 'invalid').length,
		refused: results.filter((r) => !r.ok && r.reason === 'throttled').length,
		signedIn: results.filter((r) => r.ok).length
	});

	test('50 parallel wrong guesses at one account, from 50 clients, through two app instances: only the limit is evaluated', async () => {
		const user = await activeUser('besieged');
		// Two throttle objects with the same name stand for two app processes sharing the database.
		const instances = [new AttemptThrottle('sign-in', SIGN_IN_LIMITS), new AttemptThrottle('sign-in', SIGN_IN_LIMITS)];
		const t0 = performance.now();
		const results = await Promise.all(
			Array.from({ length: 50 }, (_, i) =>
				checkPassword(em(), user.email, `wrong guess ${i}`, `203.0.113.${i + 1}`, instances[i % 2])
			)
		);
		const counts = tally(results);
		console.log(
			`50 parallel guesses at one account: ${JSON.stringify(counts)} in ${Math.round(performance.now() - t0)} ms`
		);
		expect(counts).toEqual({
			evaluated: SIGN_IN_LIMITS.perAccount,
			refused: 50 - SIGN_IN_LIMITS.perAccount,
			signedIn: 0
		});
		// The right password is refused too while the account is held.
		expect(await checkPassword(em(), user.email, PASSWORD, '203.0.113.200', instances[0])).toMatchObject({
			reason: 'throttled'
		});
	});

	test('50 parallel guesses at 50 accounts from one client: only the per-client limit is evaluated', async () => {
		const client = clientAddress();
		const results = await Promise.all(
			Array.from({ length: 50 }, (_, i) => checkPassword(em(), unique(`spray${i}`), 'a guess', client))
		);
		const counts = tally(results);
		console.log(`50 parallel guesses from one client: ${JSON.stringify(counts)}`);
		expect(counts).toEqual({
			evaluated: SIGN_IN_LIMITS.perAddress,
			refused: 50 - SIGN_IN_LIMITS.perAddress,
			signedIn: 0
		});
	});

	test('the window slides; a success clears the account count but not the client count', async () => {
		let now = Date.parse('2026-01-01T00:00:00Z');
		const throttle = new AttemptThrottle(
			`window-${tag()}`,
			{ perAccount: 3, perAddress: 5, windowMs: 60_000 },
			() => now
		);
		const take = (account: string, client: string) => throttle.take(em(), account, client);
		for (let i = 0; i < 3; i++) expect((await take('a@x.test', '10.0.0.1')).allowed).toBe(true);
		expect(await take('A@x.test', '10.0.0.2')).toEqual({ allowed: false, retryAfterSeconds: 60 });
		now += 30_000;
		expect(await take('a@x.test', '10.0.0.2')).toEqual({ allowed: false, retryAfterSeconds: 30 });
		now += 30_001;
		expect((await take('a@x.test', '10.0.0.2')).allowed).toBe(true);

		const first = await take('b@x.test', '10.0.0.3');
		await take('b@x.test', '10.0.0.3');
		if (!first.allowed) throw new Error('the first attempt was refused');
		await throttle.succeeded(em(), first.attempt);
		for (let i = 0; i < 3; i++) expect((await take('b@x.test', '10.0.0.4')).allowed).toBe(true);
		// 10.0.0.3 keeps one failure; four more reach its limit of five.
		for (let i = 0; i < 4; i++) expect((await take(`c${i}@x.test`, '10.0.0.3')).allowed).toBe(true);
		expect((await take('d@x.test', '10.0.0.3')).allowed).toBe(false);
	});
});

describe('password reset requests are throttled per address and per client', () => {
	const resetLinks = (userId: string) => em().count(OneTimeLink, { user: userId, purpose: 'password-reset' });

	test('parallel requests for one address from many clients mail only the per-address limit of links', async () => {
		const user = await activeUser('reset-target');
		const answers = await Promise.all(
			Array.from({ length: 8 }, (_, i) => requestPasswordReset(em(), user.email, ORIGIN, audit(`192.0.2.${i + 1}`)))
		);
		await Promise.all(answers.map((answer) => answer.delivery));
		expect(answers.every((answer) => Object.keys(answer).join() === 'delivery')).toBe(true);
		expect(await resetLinks(user.id)).toBe(PASSWORD_RESET_LIMITS.perAccount);
		expect(await em().count(AuditEvent, { kind: 'password-reset-throttled', subject: user.email })).toBe(
			8 - PASSWORD_RESET_LIMITS.perAccount
		);
	});

	test('one client asking for many addresses is stopped at the per-client limit, known address or not', async () => {
		const client = clientAddress();
		for (let i = 0; i < PASSWORD_RESET_LIMITS.perAddress; i++) {
			await requestPasswordReset(em(), unique(`nobody${i}`), ORIGIN, audit(client));
		}
		const user = await activeUser('reset-late');
		await (
			await requestPasswordReset(em(), user.email, ORIGIN, audit(client))
		).delivery;
		expect(await resetLinks(user.id)).toBe(0);
		await (
			await requestPasswordReset(em(), user.email, ORIGIN, audit(clientAddress()))
		).delivery;
		expect(await resetLinks(user.id)).toBe(1);
	});
});

describe('nothing tells whether an address has an account', () => {
	test('sign-in: a wrong password and an unknown address answer alike, in alike time', async () => {
		const users = await Promise.all(Array.from({ length: 10 }, (_, i) => activeUser(`timed${i}`)));
		const answers: SignInResult[][] = [[], []];
		const ratio = await timeAlike(
			'sign-in (service)',
			10,
			async (i) => answers[0].push(await checkPassword(em(), users[i].email, 'wrong', clientAddress())),
			async (i) => answers[1].push(await checkPassword(em(), unique(`ghost${i}`), 'wrong', clientAddress()))
		);
		expect(answers[0]).toEqual(answers[1]);
		expect(ratio).toBeGreaterThan(0.5);
		expect(ratio).toBeLessThan(2);
	});

	test('password reset: a known and an unknown address answer alike, in alike time', async () => {
		const users = await Promise.all(Array.from({ length: 10 }, (_, i) => activeUser(`reset-timed${i}`)));
		const ratio = await timeAlike(
			'password reset request (service)',
			10,
			async (i) => await requestPasswordReset(em(), users[i].email, ORIGIN, audit(clientAddress())),
			async (i) => await requestPasswordReset(em(), unique(`r${i}`), ORIGIN, audit(clientAddress()))
		);
		expect(ratio).toBeGreaterThan(0.5);
		expect(ratio).toBeLessThan(2);
	});

	test('e-mail change to an address with an account: the same answer, no link, its owner is told', async () => {
		const mover = await activeUser('mover');
		const owner = await activeUser('owner');
		const taken = await requestEmailChange(em(), mover.id, owner.email.toUpperCase(), ORIGIN, audit('127.0.0.1'));
		const free = unique('free');
		const fresh = await requestEmailChange(em(), mover.id, free, ORIGIN, audit('127.0.0.1'));
		expect(Object.keys(taken)).toEqual(Object.keys(fresh));
		await Promise.all([taken.delivery, fresh.delivery]);
		const notice = await mail.waitFor((m) => m.to.includes(owner.email));
		expect(notice.subject).toBe('Your Candlebook address was asked for');
		expect(notice.text).not.toMatch(/token=/);
		expect(await em().count(OneTimeLink, { user: mover.id, purpose: 'email-change', email: owner.email })).toBe(0);
		expect((await mail.waitFor((m) => m.to.includes(free))).text).toMatch(/\/verify-email\?token=/);

		const others = await Promise.all(Array.from({ length: 10 }, (_, i) => activeUser(`holder${i}`)));
		const ratio = await timeAlike(
			'e-mail change (service)',
			10,
			async (i) => await requestEmailChange(em(), mover.id, others[i].email, ORIGIN, audit('127.0.0.1')),
			async (i) => await requestEmailChange(em(), mover.id, unique(`to${i}`), ORIGIN, audit('127.0.0.1'))
		);
		expect(ratio).toBeGreaterThan(0.5);
		expect(ratio).toBeLessThan(2);
	});

	test('adding a member by an unknown address mails an invitation over SMTP and answers as for a known one', async () => {
		const group = await createGroup(
			em(),
			{ slug: `h-${tag()}`, name: 'Hardening', description: null },
			audit('127.0.0.1')
		);
		const known = await activeUser('known-member');
		const stranger = unique('stranger');
		const forKnown = await addOrInviteMember(em(), group.slug, known.email, 'member', ORIGIN, audit('127.0.0.1'));
		const forStranger = await addOrInviteMember(em(), group.slug, stranger, 'manager', ORIGIN, audit('127.0.0.1'));
		expect(Object.keys(forStranger)).toEqual(Object.keys(forKnown));
		await forStranger.delivery;

		const invitation = await mail.waitFor((m: CapturedMail) => m.to.includes(stranger));
		expect(invitation.subject).toBe('You are invited to Candlebook');
		const token = /\/invitation\?token=([a-z0-9]+)/.exec(invitation.text)![1];
		const invited = await acceptInvitation(em(), token, 'the stranger password', audit('127.0.0.1'));
		expect(invited?.email).toBe(stranger);
		expect(await standingIn(em(), invited!.id, group.slug)).toBe('manager');
		expect(await standingIn(em(), known.id, group.slug)).toBe('member');
		expect((await em().findOneOrFail(User, { email: stranger })).roles).toEqual(['reader']);

		const people = await Promise.all(Array.from({ length: 10 }, (_, i) => activeUser(`joiner${i}`)));
		const ratio = await timeAlike(
			'add member (service)',
			10,
			async (i) => await addOrInviteMember(em(), group.slug, people[i].email, 'member', ORIGIN, audit('127.0.0.1')),
			async (i) => await addOrInviteMember(em(), group.slug, unique(`newbie${i}`), 'member', ORIGIN, audit('127.0.0.1'))
		);
		expect(ratio).toBeGreaterThan(0.5);
		expect(ratio).toBeLessThan(2);
	});
});
