import type { z } from 'zod';
import { fieldErrors } from '../api/errors';
import { RegistryError } from './errors';

/** Glue for the read API's routes: query parameters and caching that depends on who asks. */

/** The query string parsed by the schema, or 422 naming each bad parameter. */
export function parseQuery<T extends z.ZodType>(url: URL, schema: T): z.infer<T> {
	const result = schema.safeParse(Object.fromEntries(url.searchParams));
	if (!result.success) {
		const errors = fieldErrors(result.error);
		const names = [...new Set(errors.map((error) => error.path.split('/')[0]))].join(', ');
		throw new RegistryError(422, 'bad-query', `Bad query parameter: ${names}.`, errors);
	}
	return result.data;
}

export const badParameter = (name: string, message: string) =>
	new RegistryError(422, 'bad-query', `Bad query parameter: ${name}.`, [{ path: name, message }]);

/**
 * Headers for an answer that depends on who asks (private relations, embargoed versions): no shared
 * cache may keep it, and a browser cache keys it on the credentials.
 */
export const VIEWER_DEPENDENT_HEADERS: Readonly<Record<string, string>> = Object.freeze({
	vary: 'Authorization, Cookie',
	'cache-control': 'private, no-cache'
});
