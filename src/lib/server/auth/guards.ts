import { error } from '@sveltejs/kit';
import { getRequestEvent } from '$app/server';
import type { GroupStanding, Role } from '../entities/index';
import { standingIn } from '../accounts/group-service';
import type { AuthUser } from './principal';

/**
 * Route-level checks. The request guard has already applied the access policy; these give routes a
 * typed user and repeat the check where the route depends on it.
 */
export function requireUser(): AuthUser {
	const { locals } = getRequestEvent();
	if (!locals.user) error(401, 'Sign in first.');
	return locals.user;
}

export function requireRole(role: Role): AuthUser {
	const user = requireUser();
	if (!user.roles.includes(role)) error(403, `This needs the ${role} role.`);
	return user;
}

/** The caller's standing in a group, refusing anyone below `needed` (admins always pass). */
export async function requireGroupStanding(slug: string, needed: GroupStanding): Promise<AuthUser> {
	const user = requireUser();
	if (user.roles.includes('admin')) return user;
	const standing = await standingIn(getRequestEvent().locals.em, user.id, slug);
	if (standing === null || (needed === 'manager' && standing !== 'manager')) {
		error(403, needed === 'manager' ? 'Only managers of this group may do this.' : 'Only members may see this.');
	}
	return user;
}
