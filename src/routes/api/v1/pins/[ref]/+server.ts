import { pinnedVersionResponse, parseRef } from '$lib/server/api/pinned-version';
import { problem } from '$lib/server/api/problem';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import type { RequestHandler } from './$types';

/** `GET /api/v1/pins/{slug}@{n}`: the same bytes as the version's own URL. */
export const GET: RequestHandler = ({ locals, params, request }) => {
	const ref = parseRef(params.ref);
	if (!ref) return problem(404, `"${params.ref}" is not a reference of the form slug@version.`);
	return registryResponse(() =>
		pinnedVersionResponse(locals.em, readerOf(locals), ref.slug, ref.number, request.headers.get('if-none-match'))
	);
};
