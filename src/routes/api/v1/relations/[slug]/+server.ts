import { json } from '@sveltejs/kit';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import { VIEWER_DEPENDENT_HEADERS } from '$lib/server/registry/read-http';
import { relationDetailToWire } from '$lib/server/registry/read-wire';
import { relationDetail } from '$lib/server/registry/relation-catalogue';
import type { RequestHandler } from './$types';

/** A relation with every version the caller may see: the mutable facts (standing, successor, embargo). */
export const GET: RequestHandler = ({ locals, params }) =>
	registryResponse(async () =>
		json(relationDetailToWire(await relationDetail(locals.em, readerOf(locals), params.slug)), {
			headers: VIEWER_DEPENDENT_HEADERS
		})
	);
