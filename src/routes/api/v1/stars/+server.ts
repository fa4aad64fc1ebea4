import { json } from '@sveltejs/kit';
import { StarQuerySchema } from '$lib/server/api/read-schemas';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import { badParameter, parseQuery, VIEWER_DEPENDENT_HEADERS } from '$lib/server/registry/read-http';
import { starAppearanceToWire } from '$lib/server/registry/read-wire';
import { findStar } from '$lib/server/registry/star-search';
import type { RequestHandler } from './$types';

const encode = (after: [string, number]) => Buffer.from(JSON.stringify(after), 'utf8').toString('base64url');

function decode(cursor: string): [string, number] | null {
	try {
		const value = JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8')) as unknown;
		if (Array.isArray(value) && typeof value[0] === 'string' && Number.isInteger(value[1]))
			return [value[0], value[1] as number];
	} catch {
		// Not base64url JSON: refused below.
	}
	return null;
}

/** `?q=` a star's name or cross id: the calibrator revisions that hold it and what each version's fit did with it. */
export const GET: RequestHandler = ({ locals, url }) =>
	registryResponse(async () => {
		const query = parseQuery(url, StarQuerySchema);
		const after = query.cursor === undefined ? null : decode(query.cursor);
		if (query.cursor !== undefined && !after) throw badParameter('cursor', 'is not a cursor this search gave out');
		const page = await findStar(locals.em, readerOf(locals), { q: query.q, limit: query.limit, after });
		return json(
			{
				q: query.q,
				items: page.items.map(starAppearanceToWire),
				next_cursor: page.nextAfter ? encode(page.nextAfter) : null
			},
			{ headers: VIEWER_DEPENDENT_HEADERS }
		);
	});
