import { AsyncLocalStorage } from 'node:async_hooks';
import type { EntityManager } from '@mikro-orm/postgresql';
import { GroupMembership, User, type UserEntity } from '../entities/index';
import { HeldMail } from '../entities/held-mail.entity';
import type { RelationEntity } from '../entities/relation.entity';
import { RelationWatch } from '../entities/relation-watch.entity';
import type { VersionLifecycleEntity } from '../entities/version-lifecycle.entity';
import { logger } from '../logger';
import { sendMail, type OutgoingMail } from '../mail/mailer';

/**
 * Registry mail: reviewers hear of a submission, authors of every decision and comment, watchers of
 * every new or deprecated version. Mail is sent after the change has committed, and a mail server
 * that is away never undoes a change. Mail never tells anyone of what they may not see: while a
 * proposal's version is its group's alone, only members (and admins) hear of it, and mail to watchers
 * outside the group about an embargoed version is held until the embargo ends.
 */
const SIGNATURE = '\n\n— Candlebook, the registry of reviewed period–luminosity calibrations';

const muted = new AsyncLocalStorage<true>();

/** Runs `work` without sending registry mail (the demo seed writes to invented addresses). */
export function withoutRegistryMail<T>(work: () => Promise<T>): Promise<T> {
	return muted.run(true, work);
}

export async function deliver(mails: readonly OutgoingMail[]): Promise<void> {
	if (muted.getStore()) return;
	for (const mail of mails) {
		try {
			await sendMail(mail);
		} catch (error) {
			logger.warn({ to: mail.to, subject: mail.subject, err: error }, 'registry mail was not sent');
		}
	}
}

/** Those of `users` who belong to the relation's owning group, or are admins. */
export async function inOwningGroup(em: EntityManager, relation: RelationEntity, users: UserEntity[]) {
	if (users.length === 0) return users;
	const members = await em.find(
		GroupMembership,
		{ group: relation.group.id, user: { $in: users.map((user) => user.id) } },
		{ fields: ['user'] }
	);
	const memberIds = new Set(members.map((membership) => membership.user.id));
	return users.filter((user) => memberIds.has(user.id) || user.roles.includes('admin'));
}

/**
 * Everyone with the reviewer role who may review the proposal, except the author: on a public relation
 * any reviewer, unless the version is kept in its group (`inGroup`), when only the group's reviewers.
 */
export async function reviewersOf(em: EntityManager, relation: RelationEntity, exceptId: string, inGroup: boolean) {
	const reviewers = await em.find(User, {
		roles: { $contains: ['reviewer'] },
		suspendedAt: null,
		id: { $ne: exceptId }
	});
	if (relation.visibility === 'public' && !inGroup) return reviewers;
	return inOwningGroup(em, relation, reviewers);
}

export async function watchersOf(em: EntityManager, relationId: string) {
	const watches = await em.find(RelationWatch, { relation: relationId }, { populate: ['user'] });
	return watches.map((watch) => watch.user).filter((user) => !user.suspendedAt);
}

/**
 * Mail to a relation's watchers about one version. While the version is under embargo, watchers in the
 * owning group (and admins) get it now; for everyone else it is held (`app_held_mail`) and goes out when
 * the embargo ends. Call inside the transaction that changed the version; send what it returns after
 * the commit.
 */
export async function mailWatchers(
	em: EntityManager,
	relation: RelationEntity,
	lifecycle: VersionLifecycleEntity,
	embargoed: boolean,
	compose: (to: string) => OutgoingMail
): Promise<OutgoingMail[]> {
	const watchers = await watchersOf(em, relation.id);
	if (!embargoed) return watchers.map((watcher) => compose(watcher.email));
	const insiders = await inOwningGroup(em, relation, watchers);
	const inside = new Set(insiders.map((user) => user.id));
	// Mail that is muted now (the demo seed) is not held for later either.
	const outsiders = muted.getStore() ? [] : watchers.filter((watcher) => !inside.has(watcher.id));
	for (const outsider of outsiders) {
		const { subject, text } = compose(outsider.email);
		em.create(HeldMail, { lifecycle, recipient: outsider, subject, text, sentAt: null });
	}
	await em.flush();
	return insiders.map((insider) => compose(insider.email));
}

/**
 * Sends the held mail of every version whose embargo has ended (released, or its date passed), to
 * recipients who still watch the relation and are not suspended; the rest is dropped. A message that
 * fails to send stays held for the next run. Runs after a release and on the job queue's schedule.
 */
export async function deliverHeldMail(em: EntityManager, now = new Date()): Promise<number> {
	if (muted.getStore()) return 0;
	const due = await em.find(
		HeldMail,
		{
			sentAt: null,
			lifecycle: { $or: [{ releasedAt: { $ne: null } }, { embargoUntil: { $lte: now } }] }
		},
		{ populate: ['recipient', 'lifecycle'], orderBy: { heldAt: 'asc' }, limit: 500 }
	);
	let sent = 0;
	for (const held of due) {
		const stillWatching =
			!held.recipient.suspendedAt &&
			(await em.count(RelationWatch, { relation: held.lifecycle.relation.id, user: held.recipient.id })) > 0;
		// Claim the message first, so two sweeps running at once never both send it.
		const claimed = await em.nativeUpdate(HeldMail, { id: held.id, sentAt: null }, { sentAt: now });
		if (claimed === 0 || !stillWatching) continue;
		try {
			await sendMail({ to: held.recipient.email, subject: held.subject, text: held.text });
			sent++;
		} catch (error) {
			await em.nativeUpdate(HeldMail, { id: held.id }, { sentAt: null });
			logger.warn({ to: held.recipient.email, subject: held.subject, err: error }, 'held mail was not sent; kept');
		}
	}
	return sent;
}

export function submittedMail(to: string, relationSlug: string, title: string, proposalId: string): OutgoingMail {
	return {
		to,
		subject: `Review requested: ${title} (${relationSlug})`,
		text:
			`A refit of ${relationSlug} is ready for review: "${title}".\n\n` +
			`Proposal ${proposalId}: GET /api/v1/proposals/${proposalId} shows it with its comparison.${SIGNATURE}`
	};
}

export function decisionMail(
	to: string,
	relationSlug: string,
	title: string,
	who: string,
	what: string,
	comment: string
): OutgoingMail {
	return {
		to,
		subject: `${who} ${what} your proposal "${title}" (${relationSlug})`,
		text: `${who} ${what} your proposal "${title}" for ${relationSlug}.${comment ? `\n\n${comment}` : ''}${SIGNATURE}`
	};
}

export function versionMail(
	to: string,
	ref: string,
	digest: string,
	kind: 'new' | 'deprecated',
	reason = ''
): OutgoingMail {
	return kind === 'new'
		? {
				to,
				subject: `New version: ${ref}`,
				text: `${ref} has been approved and frozen.\nDigest: ${digest}${SIGNATURE}`
			}
		: {
				to,
				subject: `Deprecated: ${ref}`,
				text: `${ref} (${digest}) has been deprecated.\n\nReason: ${reason}${SIGNATURE}`
			};
}
