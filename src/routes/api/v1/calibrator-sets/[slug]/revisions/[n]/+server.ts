import { revisionFormat, revisionResponse } from '$lib/server/api/revision-response';
import { readerOf, registryResponse, versionParam } from '$lib/server/registry/http';
import type { RequestHandler } from './$types';

/** One revision as JSON, CSV or VOTable (`?format=` or `Accept`), byte-identical on every fetch. */
export const GET: RequestHandler = ({ locals, params, request, url }) =>
	registryResponse(() =>
		revisionResponse(
			locals.em,
			readerOf(locals),
			params.slug,
			versionParam(params.n),
			revisionFormat(url.searchParams.get('format'), request.headers.get('accept')),
			request.headers.get('if-none-match')
		)
	);
