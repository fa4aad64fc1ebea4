import type { EntityManager } from '@mikro-orm/postgresql';
import { GroupMembership, type GroupStanding, type Role } from '../entities/index';

/** Who acts on the registry: the signed-in person (browser session or API token). */
export interface Actor {
	id: string;
	displayName: string;
	roles: readonly Role[];
}

export const isAdmin = (actor: Actor): boolean => actor.roles.includes('admin');
export const hasRole = (actor: Actor, role: Role): boolean => actor.roles.includes(role);

/** The actor's standing in a group (by id), or null when not a member. */
export async function standingInGroup(
	em: EntityManager,
	actor: Actor | null,
	groupId: string
): Promise<GroupStanding | null> {
	if (!actor) return null;
	const membership = await em.findOne(GroupMembership, { user: actor.id, group: groupId }, { fields: ['standing'] });
	return membership?.standing ?? null;
}

/** Member (or manager) of the group, or an admin. */
export async function belongsTo(em: EntityManager, actor: Actor | null, groupId: string): Promise<boolean> {
	if (!actor) return false;
	return isAdmin(actor) || (await standingInGroup(em, actor, groupId)) !== null;
}
