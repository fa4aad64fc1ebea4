import { json } from '@sveltejs/kit';
import { findUpload } from '$lib/server/light-curves/uploads';
import { uploadToWire } from '$lib/server/light-curves/wire';
import { actorOf, registryResponse, uuidParam } from '$lib/server/registry/http';
import type { RequestHandler } from './$types';

/** One upload of the caller, its analysis job and, once finished, one result per star and band. */
export const GET: RequestHandler = (event) =>
	registryResponse(async () => {
		const found = await findUpload(event.locals.em, actorOf(event.locals), uuidParam(event.params.id, 'upload'));
		return json(uploadToWire(found.upload, found.results, found.job), { headers: { 'cache-control': 'no-store' } });
	});
