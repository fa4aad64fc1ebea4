const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS']);

export interface WriteRequest {
	method: string;
	pathname: string;
	/** The `Origin` request header, or null. */
	origin: string | null;
	/** The `Sec-Fetch-Site` request header, or null. */
	fetchSite: string | null;
	/** This site's own origin, as the app sees its URL (ORIGIN in production). */
	siteOrigin: string;
	/** Whether a session cookie, not an API token, is what signs the request in. */
	cookieAuthenticated: boolean;
}

/**
 * Why an API write must be refused as cross-site, or null. A browser attaches the session cookie to a
 * request another site's page makes, so a write signed in by cookie must prove it comes from
 * Candlebook's own pages: `Sec-Fetch-Site` must not say `cross-site` or `same-site` (a sibling host is
 * another origin too), and an `Origin` header must name this site. Browsers send at least one of the two
 * on every such write (Fetch Standard); a request with neither is a program that holds the cookie
 * itself, which no other site can make a browser send, so it passes. API tokens are never sent
 * ambiently, so token calls pass.
 */
export function crossSiteRefusal(request: WriteRequest): string | null {
	if (!request.cookieAuthenticated || SAFE_METHODS.has(request.method)) return null;
	if (!request.pathname.startsWith('/api/')) return null;
	const site = request.fetchSite?.trim().toLowerCase();
	if (site === 'cross-site' || site === 'same-site') {
		return `A write signed in by session cookie came from another site (Sec-Fetch-Site: ${site}); only Candlebook's own pages may make it. Programs send an API token instead.`;
	}
	if (request.origin !== null && request.origin !== request.siteOrigin) {
		return `A write signed in by session cookie came from ${request.origin}, not ${request.siteOrigin}; only Candlebook's own pages may make it. Programs send an API token instead.`;
	}
	return null;
}
