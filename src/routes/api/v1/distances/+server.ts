import { json } from '@sveltejs/kit';
import {
	computeDistances,
	DISTANCE_BODY_LIMIT_BYTES,
	readDistanceEnvelope,
	toDistanceResponse
} from '$lib/server/api/distances';
import { fail } from '$lib/server/api/errors';
import { parseJsonBytes, readBodyWithLimit } from '$lib/server/api/request-body';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import type { RequestHandler } from './$types';

/** Public relations need no token; private and embargoed versions need a reader who may see them (404 otherwise). */
export const POST: RequestHandler = async ({ locals, request }) => {
	const type = request.headers.get('content-type') ?? '';
	if (!/^application\/([a-z.+-]*\+)?json\b/i.test(type)) fail(415, 'Send the body as application/json.');
	const body = parseJsonBytes(await readBodyWithLimit(request, DISTANCE_BODY_LIMIT_BYTES));
	return registryResponse(async () => {
		const computation = await computeDistances(locals.em, readerOf(locals), readDistanceEnvelope(body));
		// Plain objects through JSON.stringify: in Node 20 that beats writing the text star by star.
		return json(toDistanceResponse(computation), { headers: { 'cache-control': 'no-store' } });
	});
};
