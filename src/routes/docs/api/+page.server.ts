import { buildOpenApiDocument } from '$lib/server/api/openapi';
import type { PageServerLoad } from './$types';

interface Operation {
	method: string;
	path: string;
	summary: string;
	description: string | null;
	/** Who may call it: anyone, or a token (with this scope when one is named). */
	access: string;
}

/** The endpoints, listed from the same OpenAPI document that /api/v1/openapi.json serves. */
export const load: PageServerLoad = ({ url }) => {
	const document = buildOpenApiDocument(url.origin) as {
		info?: { title?: string; version?: string };
		paths?: Record<
			string,
			Record<string, { summary?: string; description?: string; security?: object[]; 'x-token-scope'?: string }>
		>;
	};
	const operations: Operation[] = [];
	for (const [path, methods] of Object.entries(document.paths ?? {})) {
		for (const [method, operation] of Object.entries(methods)) {
			if (!['get', 'post', 'put', 'patch', 'delete'].includes(method)) continue;
			operations.push({
				method: method.toUpperCase(),
				path,
				summary: operation.summary ?? '',
				description: operation.description ?? null,
				access: operation.security?.some((entry) => Object.keys(entry).length === 0)
					? 'anyone'
					: operation['x-token-scope']
						? `token with ${operation['x-token-scope']}`
						: 'signed in or any token'
			});
		}
	}
	return { origin: url.origin, apiVersion: document.info?.version ?? null, operations };
};
