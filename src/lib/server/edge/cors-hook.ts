import type { Handle } from '@sveltejs/kit';
import { corsHeaders, preflightHeaders } from './cors';

/**
 * CORS for the app's own answers (the front server answers preflights itself and replays stored
 * headers; this covers `vite dev` and everything that reaches SvelteKit).
 */
export const handleCors: Handle = async ({ event, resolve }) => {
	const { method } = event.request;
	const { pathname } = event.url;
	const preflight = preflightHeaders(method, pathname, event.request.headers.get('access-control-request-method'));
	if (preflight) return new Response(null, { status: 204, headers: preflight });
	const response = await resolve(event);
	const headers = corsHeaders(method, pathname);
	if (!headers) return response;
	try {
		for (const [name, value] of Object.entries(headers)) response.headers.set(name, value);
		return response;
	} catch {
		// Headers of a fetched Response are immutable; answer a copy.
		const copy = new Response(response.body, response);
		for (const [name, value] of Object.entries(headers)) copy.headers.set(name, value);
		return copy;
	}
};
