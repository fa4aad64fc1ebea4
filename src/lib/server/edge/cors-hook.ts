import type { Handle } from '@sveltejs/kit';
import { withHeaders } from '../http/response-headers';
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
	return withHeaders(response, headers);
};
