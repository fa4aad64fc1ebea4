import { pinnedVersionResponse } from '$lib/server/api/pinned-version';
import { readerOf, registryResponse, versionParam } from '$lib/server/registry/http';
import type { RequestHandler } from './$types';

/** One frozen version: its frozen content plus digest, byte-identical on every fetch. */
export const GET: RequestHandler = ({ locals, params, request }) =>
	registryResponse(() =>
		pinnedVersionResponse(
			locals.em,
			readerOf(locals),
			params.slug,
			versionParam(params.n),
			request.headers.get('if-none-match')
		)
	);
