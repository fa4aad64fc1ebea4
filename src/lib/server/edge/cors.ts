/**
 * Cross-origin reads of the public API: any web page may GET /api/v1/ with or without a bearer token.
 * `Access-Control-Allow-Origin: *` never comes with credentials, so browsers never send cookies.
 */
export const CORS_EXPOSED_HEADERS = 'ETag, Content-Digest, RateLimit, RateLimit-Policy, Link, Content-Location';
const READ_METHODS = new Set(['GET', 'HEAD']);

export function isCorsPath(pathname: string): boolean {
	return pathname.startsWith('/api/v1/');
}

/** Headers every GET or HEAD answer under /api/v1/ carries, or null for other requests. */
export function corsHeaders(method: string, pathname: string): Record<string, string> | null {
	if (!READ_METHODS.has(method) || !isCorsPath(pathname)) return null;
	return { 'access-control-allow-origin': '*', 'access-control-expose-headers': CORS_EXPOSED_HEADERS };
}

/**
 * The answer to a CORS preflight for a read (the Fetch standard's CORS protocol): `Authorization` must be
 * named, since the `*` wildcard never covers it. Null when the request is not such a preflight.
 */
export function preflightHeaders(
	method: string,
	pathname: string,
	requestedMethod: string | null | undefined
): Record<string, string> | null {
	if (method !== 'OPTIONS' || !isCorsPath(pathname) || !requestedMethod) return null;
	if (!READ_METHODS.has(requestedMethod.toUpperCase())) return null;
	return {
		'access-control-allow-origin': '*',
		'access-control-allow-methods': 'GET, HEAD',
		'access-control-allow-headers': 'Authorization, If-None-Match',
		'access-control-max-age': '86400'
	};
}
