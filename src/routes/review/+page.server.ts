import { requireUser } from '$lib/server/auth/guards';
import { actorOf } from '$lib/server/registry/http';
import { queueFilterOf, reviewQueue } from '$lib/server/review/review-queue';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ locals, url }) => {
	const user = requireUser();
	const filter = queueFilterOf(url.searchParams, user.roles.includes('reviewer'));
	const queue = await reviewQueue(locals.em, actorOf(locals), filter);
	return { filter, ...queue };
};
