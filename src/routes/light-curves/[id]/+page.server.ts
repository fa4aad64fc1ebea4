import { error } from '@sveltejs/kit';
import { requireUser } from '$lib/server/auth/guards';
import { findUpload } from '$lib/server/light-curves/uploads';
import { uploadToWire } from '$lib/server/light-curves/wire';
import { RegistryError } from '$lib/server/registry/errors';
import { revisionsUsingUpload, setsOpenToUploads } from '$lib/server/registry/light-curve-values';
import type { PageServerLoad } from './$types';

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export const load: PageServerLoad = async ({ locals, params, depends }) => {
	const user = requireUser();
	depends('app:light-curve-upload');
	if (!UUID.test(params.id)) error(404, 'There is no such upload.');
	try {
		const actor = { id: user.id, displayName: user.displayName, roles: user.roles };
		const found = await findUpload(locals.em, actor, params.id.toLowerCase());
		const finished = found.job?.state === 'succeeded';
		return {
			upload: uploadToWire(found.upload, found.results, found.job),
			usedBy: await revisionsUsingUpload(locals.em, found.upload.id),
			// Only the uploader may take the values into a revision, and only curators upload revisions.
			targetSets:
				finished && found.upload.uploadedBy.id === user.id && user.roles.includes('curator')
					? await setsOpenToUploads(locals.em, actor)
					: []
		};
	} catch (cause) {
		if (cause instanceof RegistryError && cause.status === 404) error(404, 'There is no such upload.');
		throw cause;
	}
};
