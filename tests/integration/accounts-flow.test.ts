import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import {
	acceptInvitation,
	checkPassword,
	confirmEmailChange,
	invite,
	requestEmailChange,
	requestPasswordReset,
	resetPassword,
	setPassword,
	setRoles,
	setSuspended,
	updateProfile
} from '../../src/lib/server/accounts/account-service';
import { addMember, createGroup, standingIn } from '../../src/lib/server/accounts/group-service';
import { ProfileSchema } from '../../src/lib/server/accounts/schemas';
import { authenticateToken, createToken, revokeToken } from '../../src/lib/server/accounts/token-service';
import { luciaFor } from '../../src/lib/server/auth/lucia';
import { hashSecret } from '../../src/lib/server/auth/secrets';
import { startSession, validateSessionToken } from '../../src/lib/server/auth/session';
import { AttemptThrottle, signInThrottle } from '../../src/lib/server/auth/throttle';
import { ApiToken, AuditEvent, OneTimeLink, Session, User } from '../../src/lib/server/entities/index';
import { startMailCatcher, type MailCatcher } from '../../src/lib/server/mail/capture-server';
import type { CapturedMail } from '../../src/lib/server/mail/captured-mail';
import { openTestOrm } from '../support/database';

const ORIGIN = 'http://127.0.0.1:9';
const AUDIT = { actorId: null, clientAddress: '127.0.0.1' };
const PASSWORD = 'a long enough password';

let orm: MikroORM;
let mail: MailCatcher;

beforeAll(async () => {
	mail = await startMailCatcher();
	// Before any service reads the configuration: the app sends through this fake SMTP server.
	process.env.SMTP_URL = mail.url;
	orm = await openTestOrm();
});

afterAll(async () => {
	await orm.close(true);
	await mail.close();
});

const unique = (label: string) => `${label}-${crypto.randomUUID().slice(0, 8)}@example.test`;
const em = () => orm.em.fork();

/** The secret of the first link in a message (links carry it as `?token=`). */
function linkToken(message: CapturedMail, path: string): string {
	const match = new RegExp(`${ORIGIN}${path}\\?token=([a-z0-9]+)`).exec(message.text);
	if (!match) throw new Error(`no ${path} link in: ${message.text}`);
	return match[1];
}

const resetMailTo = (email: string) => (m: CapturedMail) =>
	m.to.includes(email) && m.subject === 'Choose a new Candlebook password';

async function activeUser(label: string) {
	const { user } = await invite(
		em(),
		{ email: unique(label), displayName: label, roles: ['reader'], groups: [] },
		ORIGIN,
		AUDIT,
		false
	);
	await setPassword(em(), user.id, PASSWORD, AUDIT);
	return user;
}

describe('invitation over real SMTP', () => {
	test('invite → the mail arrives → its link sets the password once → sign-in works', async () => {
		const group = await createGroup(
			em(),
			{ slug: `g-${crypto.randomUUID().slice(0, 8)}`, name: 'G', description: null },
			AUDIT
		);
		const email = unique('invitee');
		const { user } = await invite(
			em(),
			{
				email,
				displayName: 'Invited Person',
				roles: ['reader', 'curator'],
				groups: [{ slug: group.slug, standing: 'manager' }]
			},
			ORIGIN,
			AUDIT
		);
		expect(await standingIn(em(), user.id, group.slug)).toBe('manager');

		const message = await mail.waitFor((m) => m.to.includes(email));
		expect(message.subject).toBe('You are invited to Candlebook');
		expect(message.from).toBe('no-reply@candlebook.invalid');
		const token = linkToken(message, '/invitation');

		// Before the password is set, the account cannot sign in.
		expect((await checkPassword(em(), email, PASSWORD, '10.1.0.1', signInThrottle)).ok).toBe(false);
		expect(await acceptInvitation(em(), token, PASSWORD, AUDIT)).not.toBeNull();
		expect(await acceptInvitation(em(), token, 'another password entirely', AUDIT)).toBeNull();

		const signedIn = await checkPassword(em(), email, PASSWORD, '10.1.0.1', signInThrottle);
		expect(signedIn.ok).toBe(true);
		const lucia = luciaFor(orm);
		const { token: cookie } = await startSession(lucia, user.id, { userAgent: 'test', clientAddress: '10.1.0.1' });
		const validated = await validateSessionToken(lucia, cookie);
		expect(validated.user?.email).toBe(email);
		expect(validated.user?.roles).toEqual(['reader', 'curator']);
		// The database holds only the hash of the cookie's token.
		expect(await em().count(Session, { id: hashSecret(cookie) })).toBe(1);
		expect(await em().count(Session, { id: cookie })).toBe(0);
	});
});

describe('password reset over real SMTP', () => {
	test('a reset link works once; the old password and every session stop working', async () => {
		const user = await activeUser('resetter');
		const lucia = luciaFor(orm);
		const { token: cookie } = await startSession(lucia, user.id, { userAgent: null, clientAddress: null });

		const { delivery } = await requestPasswordReset(em(), user.email, ORIGIN, AUDIT);
		await delivery;
		const token = linkToken(await mail.waitFor(resetMailTo(user.email)), '/reset-password/new');

		expect(await resetPassword(em(), token, 'the brand new password', AUDIT)).not.toBeNull();
		expect(await resetPassword(em(), token, 'a third password here', AUDIT)).toBeNull();
		const throttle = signInThrottle;
		expect((await checkPassword(em(), user.email, PASSWORD, '10.1.0.2', throttle)).ok).toBe(false);
		expect((await checkPassword(em(), user.email, 'the brand new password', '10.1.0.2', throttle)).ok).toBe(true);
		expect((await validateSessionToken(lucia, cookie)).session).toBeNull();
	});

	test('a reset link expires', async () => {
		const user = await activeUser('late');
		await (
			await requestPasswordReset(em(), user.email, ORIGIN, AUDIT)
		).delivery;
		const token = linkToken(await mail.waitFor(resetMailTo(user.email)), '/reset-password/new');
		await em().nativeUpdate(OneTimeLink, { id: hashSecret(token) }, { expiresAt: new Date(Date.now() - 1000) });
		expect(await resetPassword(em(), token, 'too late a password', AUDIT)).toBeNull();
		expect((await checkPassword(em(), user.email, PASSWORD, '10.1.0.3', signInThrottle)).ok).toBe(true);
	});

	test('an unknown address gets the same answer and no link', async () => {
		const nobody = unique('nobody');
		const answer = await requestPasswordReset(em(), nobody, ORIGIN, AUDIT);
		await answer.delivery;
		expect(Object.keys(answer)).toEqual(['delivery']);
		expect(await em().count(OneTimeLink, { email: nobody })).toBe(0);
		expect(await em().count(AuditEvent, { kind: 'password-reset-requested', subject: nobody })).toBe(1);
	});
});

describe('API tokens', () => {
	test('a revoked token stops working at once', async () => {
		const user = await activeUser('pipeline');
		const { secret, token } = await createToken(
			em(),
			user.id,
			{ name: 'ci', scopes: ['read:private'], lifetimeDays: 30 },
			AUDIT
		);
		expect(secret).toMatch(/^cbk_[a-z2-7]{32}$/);
		expect((await em().findOneOrFail(ApiToken, { id: token.id })).secretHash).toBe(hashSecret(secret));

		const before = await authenticateToken(em(), secret);
		expect(before?.user.id).toBe(user.id);
		expect((await em().findOneOrFail(ApiToken, { id: token.id })).lastUsedAt).toBeInstanceOf(Date);

		expect(await revokeToken(em(), token.id, user.id, AUDIT)).toBe(true);
		expect(await authenticateToken(em(), secret)).toBeNull();
		expect(await em().count(AuditEvent, { kind: 'token-revoked', subject: token.id })).toBe(1);
	});

	test('an expired token and someone else’s revocation are refused', async () => {
		const owner = await activeUser('owner');
		const other = await activeUser('other');
		const { secret, token } = await createToken(em(), owner.id, { name: 'x', scopes: [], lifetimeDays: 1 }, AUDIT);
		expect(await revokeToken(em(), token.id, other.id, AUDIT)).toBe(false);
		await em().nativeUpdate(ApiToken, { id: token.id }, { expiresAt: new Date(Date.now() - 1000) });
		expect(await authenticateToken(em(), secret)).toBeNull();
	});
});

describe('suspension', () => {
	test('a suspended account cannot sign in, its sessions end and its tokens stop working', async () => {
		const user = await activeUser('suspended');
		const lucia = luciaFor(orm);
		const { token: cookie } = await startSession(lucia, user.id, { userAgent: null, clientAddress: null });
		const { secret } = await createToken(em(), user.id, { name: 's', scopes: [], lifetimeDays: null }, AUDIT);
		await setSuspended(em(), user.id, true, AUDIT);
		expect(await checkPassword(em(), user.email, PASSWORD, '10.3.0.1', signInThrottle)).toEqual({
			ok: false,
			reason: 'invalid'
		});
		expect((await validateSessionToken(lucia, cookie)).session).toBeNull();
		expect(await authenticateToken(em(), secret)).toBeNull();
		await setSuspended(em(), user.id, false, AUDIT);
		expect((await authenticateToken(em(), secret))?.user.id).toBe(user.id);
	});
});

describe('profile', () => {
	// 0000-0002-1825-0097 is the example iD in ORCID's support documentation (from memory).
	test('an ORCID iD with a wrong check digit is refused; the documentation example is stored', async () => {
		const user = await activeUser('orcid');
		const wrong = ProfileSchema.safeParse({ displayName: 'O', affiliation: '', orcid: '0000-0002-1825-0098' });
		expect(wrong.success).toBe(false);
		expect(wrong.error?.issues[0]).toMatchObject({ path: ['orcid'], message: expect.stringMatching(/check digit/) });

		const right = ProfileSchema.parse({
			displayName: 'O',
			affiliation: 'Somewhere',
			orcid: 'https://orcid.org/0000-0002-1825-0097'
		});
		await updateProfile(em(), user.id, right);
		expect((await em().findOneOrFail(User, { id: user.id })).orcid).toBe('0000-0002-1825-0097');
	});

	test('a new address takes effect only through the link mailed to it', async () => {
		const user = await activeUser('mover');
		const next = unique('moved');
		await requestEmailChange(em(), user.id, next, ORIGIN, AUDIT);
		expect((await em().findOneOrFail(User, { id: user.id })).email).toBe(user.email);
		const token = linkToken(await mail.waitFor((m) => m.to.includes(next)), '/verify-email');
		expect(await confirmEmailChange(em(), token, AUDIT)).toBe(next);
		expect((await em().findOneOrFail(User, { id: user.id })).email).toBe(next);
		expect(await confirmEmailChange(em(), token, AUDIT)).toBeNull();
	});
});

describe('sessions', () => {
	test('an expired session is refused and removed; one past half its life is renewed', async () => {
		const user = await activeUser('sessions');
		const lucia = luciaFor(orm);
		const expired = await startSession(lucia, user.id, { userAgent: null, clientAddress: null });
		await em().nativeUpdate(Session, { id: expired.session.id }, { expiresAt: new Date(Date.now() - 1000) });
		expect((await validateSessionToken(lucia, expired.token)).session).toBeNull();
		expect(await em().count(Session, { id: expired.session.id })).toBe(0);

		const ageing = await startSession(lucia, user.id, { userAgent: null, clientAddress: null });
		const soon = new Date(Date.now() + 86_400_000);
		await em().nativeUpdate(Session, { id: ageing.session.id }, { expiresAt: soon });
		const renewed = await validateSessionToken(lucia, ageing.token);
		expect(renewed.session?.fresh).toBe(true);
		const stored = await em().findOneOrFail(Session, { id: ageing.session.id });
		expect(stored.expiresAt.getTime()).toBeGreaterThan(soon.getTime() + 86_400_000);
	});

	test('signing out everywhere ends every session of the person', async () => {
		const user = await activeUser('everywhere');
		const lucia = luciaFor(orm);
		const first = await startSession(lucia, user.id, { userAgent: 'a', clientAddress: null });
		const second = await startSession(lucia, user.id, { userAgent: 'b', clientAddress: null });
		await lucia.invalidateUserSessions(user.id);
		expect((await validateSessionToken(lucia, first.token)).session).toBeNull();
		expect((await validateSessionToken(lucia, second.token)).session).toBeNull();
	});
});

describe('abuse limits and audit', () => {
	test('unknown account and wrong password answer alike; repeated failures are throttled with a clear message', async () => {
		const user = await activeUser('target');
		const throttle = new AttemptThrottle('sign-in-test', { perAccount: 3, perAddress: 100, windowMs: 60_000 });
		const unknown = await checkPassword(em(), unique('ghost'), PASSWORD, '10.2.0.1', throttle);
		const wrong = await checkPassword(em(), user.email, 'not the password', '10.2.0.1', throttle);
		expect(unknown).toEqual(wrong);
		await checkPassword(em(), user.email, 'not the password', '10.2.0.1', throttle);
		await checkPassword(em(), user.email, 'not the password', '10.2.0.1', throttle);
		const held = await checkPassword(em(), user.email, PASSWORD, '10.2.0.1', throttle);
		expect(held).toMatchObject({
			ok: false,
			reason: 'throttled',
			message: expect.stringMatching(/Too many sign-in attempts/)
		});
		expect(await em().count(AuditEvent, { kind: 'sign-in-failed', subject: user.email })).toBe(3);
		expect(await em().count(AuditEvent, { kind: 'sign-in-throttled', subject: user.email })).toBe(1);
	});

	test('role and group changes and token creation are audited', async () => {
		const user = await activeUser('audited');
		const group = await createGroup(
			em(),
			{ slug: `a-${crypto.randomUUID().slice(0, 8)}`, name: 'A', description: null },
			AUDIT
		);
		await setRoles(em(), user.id, ['reader', 'reviewer'], AUDIT);
		await addMember(em(), group.slug, user.email, 'member', AUDIT);
		const { token } = await createToken(em(), user.id, { name: 't', scopes: ['review'], lifetimeDays: null }, AUDIT);
		const kinds = (
			await em().find(AuditEvent, { $or: [{ subject: user.id }, { subject: group.slug }, { subject: token.id }] })
		).map((event) => event.kind);
		expect(kinds).toEqual(
			expect.arrayContaining(['roles-changed', 'group-created', 'group-member-added', 'token-created'])
		);
		const roleChange = await em().findOneOrFail(AuditEvent, { kind: 'roles-changed', subject: user.id });
		expect(roleChange.detail).toEqual({ before: ['reader'], after: ['reader', 'reviewer'] });
	});
});
