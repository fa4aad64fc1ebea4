import type { EntityManager } from '@mikro-orm/postgresql';
import { GroupMembership, type GroupStanding, type Role } from '../entities/index';

/** Who acts on the registry: the signed-in person (browser session or API token). */
export interface Actor {
	id: string;
	displayName: string;
	roles: readonly Role[];
	/**
	 * `false` when the person acts through an API token without the read:private scope: the actor then
	 * sees what an anonymous caller sees (plus their own work that carries nothing private), while keeping
	 * the authority to write what the token's scopes allow. Absent (a browser session, the services' own
	 * callers) means everything the person may see.
	 */
	readsPrivate?: boolean;
}

export const isAdmin = (actor: Actor): boolean => actor.roles.includes('admin');
export const hasRole = (actor: Actor, role: Role): boolean => actor.roles.includes(role);

/** Whether the actor's credential reaches group-private and embargoed content at all. */
export const readsPrivate = (actor: Actor | null): actor is Actor => !!actor && actor.readsPrivate !== false;

/** An admin's right to see everyone's records (other people's fits, uploads, drafts), within the credential's reach. */
export const seesAllAsAdmin = (actor: Actor | null): boolean => readsPrivate(actor) && isAdmin(actor);

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

/** Member (or manager) of the group, or an admin: the authority to act for the group. */
export async function belongsTo(em: EntityManager, actor: Actor | null, groupId: string): Promise<boolean> {
	if (!actor) return false;
	return isAdmin(actor) || (await standingInGroup(em, actor, groupId)) !== null;
}

/**
 * The one decision on who may see what a group keeps to itself (its private relations and calibrator
 * sets, its embargoed versions and the proposals that make them): its members and admins, and only
 * through a browser session or a token with read:private. Every read of group-private content asks this.
 */
export async function maySeePrivateOf(em: EntityManager, actor: Actor | null, groupId: string): Promise<boolean> {
	return readsPrivate(actor) && belongsTo(em, actor, groupId);
}
