import type { EntityManager } from '@mikro-orm/postgresql';
import {
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
import { describeWait, signInThrottle, type SignInThrottle } from '../auth/throttle';
import { logger } from '../logger';
import { sendMail } from '../mail/mailer';
import { emailChangeMail, invitationMail, passwordResetMail } from '../mail/messages';
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
	const link = sendLink ? await sendInvitation(em, user, origin, audit) : null;
	return { user, link };
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
 * Mails a reset link if an active account has this address. The caller answers the same way either
 * way; delivery is returned, not awaited, so the response time does not tell either.
 */
export async function requestPasswordReset(
	em: EntityManager,
	email: string,
	origin: string,
	audit: AuditContext
): Promise<{ delivery: Promise<void> }> {
	const user = await em.findOne(User, { email: email.toLowerCase(), passwordHash: { $ne: null }, suspendedAt: null });
	await recordAudit(em, 'password-reset-requested', {
		...audit,
		subject: email.toLowerCase(),
		detail: { known: !!user }
	});
	if (!user) return { delivery: Promise.resolve() };
	const link = await issueLink(em, 'password-reset', user, user.email, origin);
	const delivery = sendMail(
		passwordResetMail(user.email, link, LINK_LIFETIME_MS['password-reset'] / MINUTE_IN_MS)
	).catch((error: Error) => logger.error({ err: error }, 'password reset mail could not be sent'));
	return { delivery };
}

/** Sets a new password from a reset link and ends every session of the account. */
export async function resetPassword(em: EntityManager, secret: string, password: string, audit: AuditContext) {
	const link = await consumeLink(em, secret, 'password-reset');
	if (!link) return null;
	await em.nativeUpdate(User, { id: link.user.id }, { passwordHash: await hashPassword(password) });
	await em.nativeDelete(Session, { user: link.user.id });
	await recordAudit(em, 'password-reset', { ...audit, actorId: link.user.id, subject: link.user.id });
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
	throttle: SignInThrottle = signInThrottle
): Promise<SignInResult> {
	const account = email.toLowerCase();
	const verdict = throttle.check(account, clientAddress);
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
		throttle.recordFailure(account, clientAddress);
		await recordAudit(em, 'sign-in-failed', { subject: account, clientAddress });
		return { ok: false, reason: 'invalid' };
	}
	throttle.recordSuccess(account);
	await recordAudit(em, 'sign-in', { actorId: user.id, subject: user.id, clientAddress });
	return { ok: true, user };
}

export async function changePassword(
	em: EntityManager,
	userId: string,
	current: string,
	next: string,
	audit: AuditContext
): Promise<boolean> {
	const user = await em.findOneOrFail(User, { id: userId });
	if (!(await verifyPassword(user.passwordHash, current))) return false;
	user.passwordHash = await hashPassword(next);
	await em.flush();
	await recordAudit(em, 'password-set', { ...audit, subject: userId });
	return true;
}

export async function updateProfile(em: EntityManager, userId: string, profile: ProfileInput) {
	const user = await em.findOneOrFail(User, { id: userId });
	Object.assign(user, profile);
	await em.flush();
	return user;
}

/** Mails a confirmation link to the new address; the account keeps its old address until it is used. */
export async function requestEmailChange(
	em: EntityManager,
	userId: string,
	newEmail: string,
	origin: string,
	audit: AuditContext
) {
	const email = newEmail.toLowerCase();
	const user = await em.findOneOrFail(User, { id: userId });
	if (email === user.email) throw new AccountError('That is already your address.');
	if (await em.count(User, { email })) throw new AccountError('That address cannot be used.');
	const link = await issueLink(em, 'email-change', user, email, origin);
	await sendMail(emailChangeMail(email, link, LINK_LIFETIME_MS['email-change'] / (60 * MINUTE_IN_MS)));
	await recordAudit(em, 'email-change-requested', { ...audit, subject: userId, detail: { to: email } });
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

/** For the operator command line: a password set directly, activating the account. */
export async function setPassword(em: EntityManager, userId: string, password: string, audit: AuditContext) {
	await em.nativeUpdate(User, { id: userId }, { passwordHash: await hashPassword(password), activatedAt: new Date() });
	await em.nativeUpdate(OneTimeLink, { user: userId, purpose: 'invitation', usedAt: null }, { usedAt: new Date() });
	await recordAudit(em, 'password-set', { ...audit, subject: userId });
}

/** Suspends or reinstates an account; suspension ends its sessions and stops its tokens at once. */
export async function setSuspended(em: EntityManager, userId: string, suspended: boolean, audit: AuditContext) {
	await em.nativeUpdate(User, { id: userId }, { suspendedAt: suspended ? new Date() : null });
	if (suspended) await em.nativeDelete(Session, { user: userId });
	await recordAudit(em, suspended ? 'account-suspended' : 'account-reinstated', { ...audit, subject: userId });
}
