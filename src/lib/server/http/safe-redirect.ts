/** Longer targets are not worth following; no page of this site needs one. */
const MAX_TARGET_LENGTH = 2048;
/** Any base works: only whether the target stays on it matters. */
const BASE = 'http://candlebook.invalid';

/**
 * Whether a redirect target, and every percent-decoding of it, reads as a path on this site. Browsers
 * strip tab and newline and read `\` as `/` (WHATWG URL Standard), so any control character, space or
 * backslash is refused outright rather than second-guessed; a later decoding that begins `//` would
 * become another host if some page redirected with it again.
 */
function isSitePath(value: string): boolean {
	// eslint-disable-next-line no-control-regex -- control characters are what is being refused
	if (/[\u0000-\u0020\u007f\\]/.test(value)) return false;
	let text = value;
	for (let round = 0; round < 4; round++) {
		// eslint-disable-next-line no-control-regex -- as above, once decoded
		if (!text.startsWith('/') || /^\/[/\\]/.test(text) || /[\u0000-\u001f\u007f]/.test(text)) return false;
		let decoded: string;
		try {
			decoded = decodeURIComponent(text);
		} catch {
			return false;
		}
		if (decoded === text) return true;
		text = decoded;
	}
	return false;
}

/**
 * The path to redirect to when a request names where to go next (`next=` after signing in, the theme
 * switch): the target itself when it is a path on this site, `fallback` when none was given, and `/`
 * for anything else (another host, a scheme, an encoded `//`, a stray control character).
 */
export function sitePath(value: string | null | undefined, fallback = '/'): string {
	if (value === null || value === undefined || value === '') return fallback;
	if (value.length > MAX_TARGET_LENGTH || !isSitePath(value)) return '/';
	const url = new URL(value, BASE);
	if (url.origin !== BASE) return '/';
	return `${url.pathname}${url.search}${url.hash}`;
}
