import { error } from '@sveltejs/kit';
import { requireUser } from '$lib/server/auth/guards';
import { starView } from '$lib/server/light-curves/star-view';
import { RegistryError } from '$lib/server/registry/errors';
import { getObjectStorage } from '$lib/server/storage/app-storage';
import type { PageServerLoad } from './$types';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export const load: PageServerLoad = async ({ locals, params }) => {
	const user = requireUser();
	if (!UUID.test(params.id)) error(404, 'There is no such upload.');
	try {
		const actor = { id: user.id, displayName: user.displayName, roles: user.roles };
		return { view: await starView(locals.em, getObjectStorage(), actor, params.id.toLowerCase(), params.star) };
	} catch (cause) {
		if (cause instanceof RegistryError && cause.status === 404) error(404, 'There is no such star in this upload.');
		throw cause;
	}
};
