import type { Handle } from '@sveltejs/kit';
import { withHeaders } from './response-headers';
import { securityHeadersFor } from './security-headers';

/** Security headers on every answer the app gives; pages keep the CSP SvelteKit wrote (kit.csp). */
export const handleSecurityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	return withHeaders(response, securityHeadersFor(response.headers));
};
