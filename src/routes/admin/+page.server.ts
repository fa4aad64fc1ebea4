import { requireRole } from '$lib/server/auth/guards';
import { ApiToken, Group, OneTimeLink, User } from '$lib/server/entities/index';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals }) => {
	requireRole('admin');
	const em = locals.em;
	const [people, pending, groups, tokens] = await Promise.all([
		em.count(User, {}),
		em.count(OneTimeLink, { purpose: 'invitation', usedAt: null, expiresAt: { $gt: new Date() } }),
		em.count(Group, {}),
		em.count(ApiToken, { revokedAt: null })
	]);
	return { counts: { people, pending, groups, tokens } };
};
