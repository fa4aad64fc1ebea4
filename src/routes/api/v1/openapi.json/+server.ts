import { json } from '@sveltejs/kit';
import { buildOpenApiDocument } from '$lib/server/api/openapi';
import type { RequestHandler } from './$types';

let cached: { origin: string; body: unknown } | undefined;

/** OpenAPI 3.1, generated from the access policy and the registered schemas; the same for everyone. */
export const GET: RequestHandler = ({ url }) => {
	if (cached?.origin !== url.origin) cached = { origin: url.origin, body: buildOpenApiDocument(url.origin) };
	return json(cached.body, { headers: { 'cache-control': 'public, max-age=300', 'access-control-allow-origin': '*' } });
};
