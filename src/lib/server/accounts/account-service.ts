import type { EntityManager } from '@mikro-orm/postgresql';
import {
	ApiToken,
	Group,
	GroupMembership,
	OneTimeLink,
	Session,
	User,
	type GroupStanding,
	type LinkPurpose,
	type Role,
	type UserEntity
} from '../entities/index';
import { hashPassword, verifyPassword } from '../auth/password';
import { generateSecret, hashSecret } from '../auth/secrets';
import { describeWait, passwordResetThrottle, signInThrottle, type AttemptThrottle } from '../auth/throttle';
import { logger } from '../logger';
import { sendMail } from '../mail/mailer';
import { addressInUseMail, emailChangeMail, invitationMail, passwordResetMail } from '../mail/messages';
import { recordAudit, type AuditContext } from './audit';
import type { ProfileInput } from './schemas';

const MINUTE_IN_MS = 60_000;
export const LINK_LIFETIME_MS: Record<LinkPurpose, number> = {
	invitation: 7 * 24 * 60 * MINUTE_IN_MS,
	'password-reset': 60 * MINUTE_IN_MS,
	'email-change': 24 * 60 * MINUTE_IN_MS
};
const LINK_PATHS: Record<LinkPurpose, string> = {
	invitation: '/invitation',
	'password-reset': '/reset-password/new',
	'email-change': '/verify-email'
};

export class AccountError extends Error {}

/** Issues a single-use link (only its hash is stored) and returns its URL. */
async function issueLink(em: EntityManager, purpose: LinkPurpose, user: UserEntity, email: string, origin: string) {
	// One pending link per purpose: a new one replaces the old.
	await em.nativeUpdate(OneTimeLink, { user, purpose, usedAt: null }, { usedAt: new Date() });
	const secret = generateSecret();
	await em.insert(OneTimeLink, {
		id: hashSecret(secret),
		purpose,
		user: user.id,
		email,
		expiresAt: new Date(Date.now() + LINK_LIFETIME_MS[purpose]),
		createdAt: new Date()
	});
	const url = new URL(LINK_PATHS[purpose], origin);
	// The secret travels in the query string, which request logs leave out.
	url.searchParams.set('token', secret);
	return url.toString();
}

/** A usable link: right purpose, not used, not expired. */
export async function findUsableLink(em: EntityManager, secret: string, purpose: LinkPurpose) {
	if (!secret) return null;
	const link = await em.findOne(OneTimeLink, { id: hashSecret(secret), purpose }, { populate: ['user'] });
	if (!link || link.usedAt || link.expiresAt <= new Date()) return null;
	return link;
}

/** Marks a link used; only one caller wins when two race for the same link. */
async function consumeLink(em: EntityManager, secret: string, purpose: LinkPurpose) {
	const link = await findUsableLink(em, secret, purpose);
	if (!link) return null;
	const won = await em.nativeUpdate(OneTimeLink, { id: link.id, usedAt: null }, { usedAt: new Date() });
	return won === 1 ? link : null;
}

export interface Invitation {
	email: string;
	displayName: string;
	roles: Role[];
	groups: { slug: string; standing: GroupStanding }[];
}

/**
 * Creates the account (without a password) with its roles and groups, and mails the invitation
 * unless `sendLink` is false (the operator command line sets the password itself).
 */
export async function invite(
	em: EntityManager,
	input: Invitation,
	origin: string,
	audit: AuditContext,
	sendLink = true
) {
	const user = await createInvitedAccount(em, input, audit);
	const link = sendLink ? await sendInvitation(em, user, origin, audit) : null;
	return { user, link };
}

/** The account an invitation creates: no password yet, with its roles and groups. */
async function createInvitedAccount(em: EntityManager, input: Invitation, audit: AuditContext) {
	const email = input.email.toLowerCase();
	if (await em.count(User, { email })) throw new AccountError('Someone with that address has an account already.');
	const groups = input.groups.length ? await em.find(Group, { slug: { $in: input.groups.map((g) => g.slug) } }) : [];
	const missing = input.groups.filter((wanted) => !groups.some((group) => group.slug === wanted.slug));
	if (missing.length) throw new AccountError(`No such group: ${missing.map((g) => g.slug).join(', ')}.`);
	const user = em.create(User, {
		email,
		displayName: input.displayName,
		affiliation: null,
		orcid: null,
		roles: input.roles
	});
	for (const wanted of input.groups) {
		em.create(GroupMembership, { user, group: groups.find((g) => g.slug === wanted.slug)!, standing: wanted.standing });
	}
	await em.flush();
	await recordAudit(em, 'user-created', { ...audit, subject: user.id, detail: { email, roles: user.roles } });
	return user;
}

/**
 * Invites someone a group manager added by an address that has no account: a reader account in that
 * group, its invitation mailed after the answer (as `delivery`), so the answer takes as long as adding
 * someone who has an account.
 */
export async function inviteToGroup(
	em: EntityManager,
	email: string,
	group: { slug: string; standing: GroupStanding },
	origin: string,
	audit: AuditContext
): Promise<{ delivery: Promise<void> }> {
	const user = await createInvitedAccount(
		em,
		{ email, displayName: email.split('@')[0], roles: ['reader'], groups: [group] },
		audit
	);
	const delivery = inBackground(em, 'group invitation', async (background) => {
		await sendInvitation(background, user, origin, audit);
	});
	return { delivery };
}

/** Work that runs after the answer is sent, on its own EntityManager; a failure is logged, not thrown. */
function inBackground(em: EntityManager, what: string, work: (em: EntityManager) => Promise<void>): Promise<void> {
	return work(em.fork()).catch((error: Error) => logger.error({ err: error }, `${what} could not be sent`));
}

/**
 * Ends every session of the account except `keepSessionId` and revokes all its API tokens: after a
 * password change or reset, whoever knew the old password keeps no way in.
 */
async function endOtherAccess(em: EntityManager, userId: string, keepSessionId: string | null) {
	const sessionsEnded = await em.nativeDelete(
		Session,
		keepSessionId ? { user: userId, id: { $ne: keepSessionId } } : { user: userId }
	);
	const tokensRevoked = await em.nativeUpdate(ApiToken, { user: userId, revokedAt: null }, { revokedAt: new Date() });
	return { sessionsEnded, tokensRevoked };
}

export async function sendInvitation(em: EntityManager, user: UserEntity, origin: string, audit: AuditContext) {
	if (user.passwordHash) throw new AccountError('This person has already chosen a password.');
	const link = await issueLink(em, 'invitation', user, user.email, origin);
	await sendMail(
		invitationMail(user.email, user.displayName, link, LINK_LIFETIME_MS.invitation / (1440 * MINUTE_IN_MS))
	);
	await recordAudit(em, 'invitation-sent', { ...audit, subject: user.id, detail: { email: user.email } });
	return link;
}

export async function acceptInvitation(em: EntityManager, secret: string, password: string, audit: AuditContext) {
	const link = await consumeLink(em, secret, 'invitation');
	if (!link) return null;
	const passwordHash = await hashPassword(password);
	await em.nativeUpdate(User, { id: link.user.id }, { passwordHash, activatedAt: new Date() });
	await recordAudit(em, 'invitation-accepted', { ...audit, actorId: link.user.id, subject: link.user.id });
	return link.user;
}

/**
 * Mails a reset link if an active account has this address, at most `PASSWORD_RESET_LIMITS` times per
 * address and per client. The caller answers the same way in every case; the link is made and mailed
 * after the answer (`delivery`), so the response time does not tell either.
 */
export async function requestPasswordReset(
	em: EntityManager,
	email: string,
	origin: string,
	audit: AuditContext,
	throttle: AttemptThrottle = passwordResetThrottle
): Promise<{ delivery: Promise<void> }> {
	const account = email.toLowerCase();
	const verdict = await throttle.take(em, account, audit.clientAddress ?? 'unknown');
	const user = await em.findOne(User, { email: account, passwordHash: { $ne: null }, suspendedAt: null });
	await recordAudit(em, verdict.allowed ? 'password-reset-requested' : 'password-reset-throttled', {
		...audit,
		subject: account,
		detail: { known: !!user }
	});
	if (!user || !verdict.allowed) return { delivery: Promise.resolve() };
	const delivery = inBackground(em, 'password reset mail', async (background) => {
		const link = await issueLink(background, 'password-reset', user, user.email, origin);
		await sendMail(passwordResetMail(user.email, link, LINK_LIFETIME_MS['password-reset'] / MINUTE_IN_MS));
	});
	return { delivery };
}

/** Sets a new password from a reset link; every session and API token of the account stops working. */
export async function resetPassword(em: EntityManager, secret: string, password: string, audit: AuditContext) {
	const link = await consumeLink(em, secret, 'password-reset');
	if (!link) return null;
	const passwordHash = await hashPassword(password);
	const ended = await em.transactional(async (tx) => {
		await tx.nativeUpdate(User, { id: link.user.id }, { passwordHash });
		return endOtherAccess(tx, link.user.id, null);
	});
	await recordAudit(em, 'password-reset', { ...audit, actorId: link.user.id, subject: link.user.id, detail: ended });
	return link.user;
}

export type SignInResult =
	| { ok: true; user: UserEntity }
	| { ok: false; reason: 'invalid' }
	| { ok: false; reason: 'throttled'; message: string };

/** The same answer for an unknown address, a wrong password and a suspended account. */
export async function checkPassword(
	em: EntityManager,
	email: string,
	password: string,
	clientAddress: string,
	throttle: AttemptThrottle = signInThrottle
): Promise<SignInResult> {
	const account = email.toLowerCase();
	// Counted before the password is checked: each guess uses up one of the limited attempts.
	const verdict = await throttle.take(em, account, clientAddress);
	if (!verdict.allowed) {
		await recordAudit(em, 'sign-in-throttled', { subject: account, clientAddress });
		return {
			ok: false,
			reason: 'throttled',
			message: `Too many sign-in attempts. Wait ${describeWait(verdict.retryAfterSeconds)} and try again, or reset your password.`
		};
	}
	const user = await em.findOne(User, { email: account });
	const matches = await verifyPassword(user?.passwordHash, password);
	if (!user || !matches || user.suspendedAt) {
		await recordAudit(em, 'sign-in-failed', { subject: account, clientAddress });
		return { ok: false, reason: 'invalid' };
	}
	await throttle.succeeded(em, verdict.attempt);
	await recordAudit(em, 'sign-in', { actorId: user.id, subject: user.id, clientAddress });
	return { ok: true, user };
}

export type PasswordChange = { changed: false } | { changed: true; sessionsEnded: number; tokensRevoked: number };

/** Sets a new password; every other session ends and every API token of the account is revoked. */
export async function changePassword(
	em: EntityManager,
	userId: string,
	current: string,
	next: string,
	audit: AuditContext,
	currentSessionId: string | null
): Promise<PasswordChange> {
	const user = await em.findOneOrFail(User, { id: userId });
	if (!(await verifyPassword(user.passwordHash, current))) return { changed: false };
	const passwordHash = await hashPassword(next);
	const ended = await em.transactional(async (tx) => {
		await tx.nativeUpdate(User, { id: userId }, { passwordHash });
		return endOtherAccess(tx, userId, currentSessionId);
	});
	await recordAudit(em, 'password-set', { ...audit, subject: userId, detail: ended });
	return { changed: true, ...ended };
}

export async function updateProfile(em: EntityManager, userId: string, profile: ProfileInput) {
	const user = await em.findOneOrFail(User, { id: userId });
	Object.assign(user, profile);
	await em.flush();
	return user;
}

/**
 * Mails a confirmation link to the new address; the account keeps its old address until it is used.
 * When another account has that address, its owner is told instead and nothing changes: the person
 * asking gets the same answer in the same time either way (the mail leaves after the answer,
 * `delivery`), so the form cannot be used to find out which addresses have accounts.
 */
export async function requestEmailChange(
	em: EntityManager,
	userId: string,
	newEmail: string,
	origin: string,
	audit: AuditContext
): Promise<{ delivery: Promise<void> }> {
	const email = newEmail.toLowerCase();
	const user = await em.findOneOrFail(User, { id: userId });
	if (email === user.email) throw new AccountError('That is already your address.');
	const taken = (await em.count(User, { email })) > 0;
	await recordAudit(em, 'email-change-requested', { ...audit, subject: userId, detail: { to: email, taken } });
	const delivery = inBackground(em, 'address change mail', async (background) => {
		if (taken) return sendMail(addressInUseMail(email));
		const link = await issueLink(background, 'email-change', user, email, origin);
		await sendMail(emailChangeMail(email, link, LINK_LIFETIME_MS['email-change'] / (60 * MINUTE_IN_MS)));
	});
	return { delivery };
}

export async function confirmEmailChange(em: EntityManager, secret: string, audit: AuditContext) {
	const link = await consumeLink(em, secret, 'email-change');
	if (!link) return null;
	if (await em.count(User, { email: link.email }))
		throw new AccountError('That address is in use by another account now.');
	const previous = link.user.email;
	await em.nativeUpdate(User, { id: link.user.id }, { email: link.email });
	await recordAudit(em, 'email-changed', {
		...audit,
		subject: link.user.id,
		detail: { from: previous, to: link.email }
	});
	return link.email;
}

export async function setRoles(em: EntityManager, userId: string, roles: Role[], audit: AuditContext) {
	const user = await em.findOneOrFail(User, { id: userId });
	const before = [...user.roles];
	user.roles = roles;
	await em.flush();
	await recordAudit(em, 'roles-changed', { ...audit, subject: userId, detail: { before, after: roles } });
	return user;
}

/**
 * For the operator command line: a password set directly, activating the account. Like any password
 * change, it ends the account's sessions and revokes its API tokens.
 */
export async function setPassword(em: EntityManager, userId: string, password: string, audit: AuditContext) {
	const passwordHash = await hashPassword(password);
	const ended = await em.transactional(async (tx) => {
		await tx.nativeUpdate(User, { id: userId }, { passwordHash, activatedAt: new Date() });
		await tx.nativeUpdate(OneTimeLink, { user: userId, purpose: 'invitation', usedAt: null }, { usedAt: new Date() });
		return endOtherAccess(tx, userId, null);
	});
	await recordAudit(em, 'password-set', { ...audit, subject: userId, detail: ended });
}

/** Suspends or reinstates an account; suspension ends its sessions and stops its tokens at once. */
export async function setSuspended(em: EntityManager, userId: string, suspended: boolean, audit: AuditContext) {
	await em.nativeUpdate(User, { id: userId }, { suspendedAt: suspended ? new Date() : null });
	if (suspended) await em.nativeDelete(Session, { user: userId });
	await recordAudit(em, suspended ? 'account-suspended' : 'account-reinstated', { ...audit, subject: userId });
}
