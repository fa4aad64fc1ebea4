import { UniqueConstraintViolationException, type EntityManager } from '@mikro-orm/postgresql';
import { Group, GroupMembership, User, type GroupEntity, type GroupStanding, type UserEntity } from '../entities/index';
import { inviteToGroup } from './account-service';
import { recordAudit, type AuditContext } from './audit';

export class GroupError extends Error {}

/** The person's standing in the group with this slug, or null when not a member (or no such group). */
export async function standingIn(em: EntityManager, userId: string, slug: string): Promise<GroupStanding | null> {
	const membership = await em.findOne(GroupMembership, { user: userId, group: { slug } }, { fields: ['standing'] });
	return membership?.standing ?? null;
}

export async function createGroup(
	em: EntityManager,
	input: { slug: string; name: string; description: string | null },
	audit: AuditContext
) {
	if (await em.count(Group, { slug: input.slug })) throw new GroupError(`A group called ${input.slug} exists already.`);
	const group = em.create(Group, input);
	await em.flush();
	await recordAudit(em, 'group-created', { ...audit, subject: group.slug, detail: { name: group.name } });
	return group;
}

export async function listGroups(em: EntityManager) {
	return em.find(Group, {}, { orderBy: { name: 'asc' } });
}

export async function listMembers(em: EntityManager, slug: string) {
	return em.find(
		GroupMembership,
		{ group: { slug } },
		{ populate: ['user'], orderBy: { standing: 'desc', user: { displayName: 'asc' } } }
	);
}

export async function groupsOf(em: EntityManager, userId: string) {
	return em.find(GroupMembership, { user: userId }, { populate: ['group'], orderBy: { group: { name: 'asc' } } });
}

async function groupOrFail(em: EntityManager, slug: string) {
	const group = await em.findOne(Group, { slug });
	if (!group) throw new GroupError(`There is no group called ${slug}.`);
	return group;
}

/** Adds a person (by e-mail) to a group, or changes their standing when already a member. */
export async function addMember(
	em: EntityManager,
	slug: string,
	email: string,
	standing: GroupStanding,
	audit: AuditContext
) {
	const group = await groupOrFail(em, slug);
	const user = await em.findOne(User, { email: email.toLowerCase() });
	if (!user) throw new GroupError('Nobody with that address has an account; invite them first.');
	return placeInGroup(em, group, user, standing, audit);
}

async function placeInGroup(
	em: EntityManager,
	group: GroupEntity,
	user: UserEntity,
	standing: GroupStanding,
	audit: AuditContext
) {
	const existing = await em.findOne(GroupMembership, { group, user });
	const membership = existing ?? em.create(GroupMembership, { group, user, standing });
	membership.standing = standing;
	await em.flush();
	await recordAudit(em, 'group-member-added', {
		...audit,
		subject: group.slug,
		detail: { userId: user.id, email: user.email, standing }
	});
	return membership;
}

/**
 * Adds the person with this address to the group or, when no account has the address, creates one in
 * the group and mails its invitation after the answer (`delivery`). The caller answers alike either
 * way, so a group manager cannot use the form to find out which addresses have accounts.
 */
export async function addOrInviteMember(
	em: EntityManager,
	slug: string,
	email: string,
	standing: GroupStanding,
	origin: string,
	audit: AuditContext
): Promise<{ delivery: Promise<void> }> {
	const group = await groupOrFail(em, slug);
	const user = await em.findOne(User, { email: email.toLowerCase() });
	const added = { delivery: Promise.resolve() };
	if (user) {
		await placeInGroup(em, group, user, standing, audit);
		return added;
	}
	try {
		return await inviteToGroup(em.fork(), email, { slug, standing }, origin, audit);
	} catch (cause) {
		// Someone else's request created the account a moment ago: add it like any other.
		if (!(cause instanceof UniqueConstraintViolationException)) throw cause;
		await addMember(em, slug, email, standing, audit);
		return added;
	}
}

export async function removeMember(em: EntityManager, slug: string, userId: string, audit: AuditContext) {
	const removed = await em.nativeDelete(GroupMembership, { group: { slug }, user: userId });
	if (removed === 0) throw new GroupError('That person is not a member of this group.');
	await recordAudit(em, 'group-member-removed', { ...audit, subject: slug, detail: { userId } });
}
