import { AsyncLocalStorage } from 'node:async_hooks';
import type { EntityManager } from '@mikro-orm/postgresql';
import { GroupMembership, User } from '../entities/index';
import type { RelationEntity } from '../entities/relation.entity';
import { RelationWatch } from '../entities/relation-watch.entity';
import { logger } from '../logger';
import { sendMail, type OutgoingMail } from '../mail/mailer';

/**
 * Registry mail: reviewers hear of a submission, authors of every decision and comment, watchers of
 * every new or deprecated version. Mail is sent after the change has committed, and a mail server
 * that is away never undoes a change.
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

/** Everyone with the reviewer role who may see the relation, except the author. */
export async function reviewersOf(em: EntityManager, relation: RelationEntity, exceptId: string) {
	const reviewers = await em.find(User, {
		roles: { $contains: ['reviewer'] },
		suspendedAt: null,
		id: { $ne: exceptId }
	});
	if (relation.visibility === 'public') return reviewers;
	const members = await em.find(GroupMembership, { group: relation.group.id }, { fields: ['user'] });
	const memberIds = new Set(members.map((membership) => membership.user.id));
	return reviewers.filter((user) => memberIds.has(user.id) || user.roles.includes('admin'));
}

export async function watchersOf(em: EntityManager, relationId: string) {
	const watches = await em.find(RelationWatch, { relation: relationId }, { populate: ['user'] });
	return watches.map((watch) => watch.user).filter((user) => !user.suspendedAt);
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
