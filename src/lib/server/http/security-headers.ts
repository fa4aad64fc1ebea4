/**
 * Headers on every answer, whoever gives it (the front server or the app): no content-type sniffing,
 * no full URL sent to other sites, no framing by any page (X-Frame-Options for browsers that predate
 * CSP frame-ancestors). Values as the OWASP HTTP Headers Cheat Sheet recommends (common practice).
 */
export const SECURITY_HEADERS: Readonly<Record<string, string>> = {
	'x-content-type-options': 'nosniff',
	'referrer-policy': 'strict-origin-when-cross-origin',
	'x-frame-options': 'DENY'
};

/** The policy of every answer that is not a page (JSON, problems, exports, 429s): it loads nothing. */
export const NON_PAGE_CSP = "default-src 'none'; frame-ancestors 'none'";
/** A page whose policy SvelteKit did not write (the static fallback error page): at least never framed. */
export const BARE_PAGE_CSP = "frame-ancestors 'none'";

/** The headers to add to an answer with these headers: the fixed set, and a CSP where it has none. */
export function securityHeadersFor(existing: { has(name: string): boolean; get(name: string): string | null }) {
	const headers: Record<string, string> = { ...SECURITY_HEADERS };
	if (!existing.has('content-security-policy')) {
		const html = (existing.get('content-type') ?? '').startsWith('text/html');
		headers['content-security-policy'] = html ? BARE_PAGE_CSP : NON_PAGE_CSP;
	}
	return headers;
}
