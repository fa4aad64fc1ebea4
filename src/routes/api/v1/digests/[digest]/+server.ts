import { json } from '@sveltejs/kit';
import { digestString } from '$lib/calibration';
import { findByDigest } from '$lib/server/registry/digest-lookup';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import { badParameter, VIEWER_DEPENDENT_HEADERS } from '$lib/server/registry/read-http';
import type { RequestHandler } from './$types';

/** `GET /api/v1/digests/sha256:<hex>`: which version or calibrator revision has that digest. */
export const GET: RequestHandler = ({ locals, params }) =>
	registryResponse(async () => {
		const digest = params.digest;
		if (!digestString.safeParse(digest).success)
			throw badParameter('digest', 'must be "sha256:" followed by 64 lowercase hex digits');
		return json(await findByDigest(locals.em, readerOf(locals), digest), { headers: VIEWER_DEPENDENT_HEADERS });
	});
