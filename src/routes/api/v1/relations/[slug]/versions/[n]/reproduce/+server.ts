import { json } from '@sveltejs/kit';
import { readerOf, registryResponse, versionParam } from '$lib/server/registry/http';
import { VIEWER_DEPENDENT_HEADERS } from '$lib/server/registry/read-http';
import { reproduceVersion, reproductionToWire } from '$lib/server/registry/reproduce';
import type { RequestHandler } from './$types';

/** Reruns the version's frozen fit spec on its frozen calibrator revision and recomputes the digest. */
export const POST: RequestHandler = async ({ locals, params }) => {
	const response = await registryResponse(async () => {
		const reproduction = await reproduceVersion(locals.em, readerOf(locals), params.slug, versionParam(params.n), {
			signedIn: locals.user !== null
		});
		return json(reproductionToWire(reproduction), { headers: VIEWER_DEPENDENT_HEADERS });
	});
	if (response.status === 401) response.headers.set('www-authenticate', 'Bearer');
	return response;
};
