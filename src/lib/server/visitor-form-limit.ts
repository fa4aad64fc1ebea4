import { isHttpError, type Handle } from '@sveltejs/kit';
import { readBodyWithLimit } from './api/request-body';

/**
 * A visitor (not signed in) posts only small forms: sign-in, password reset, invitation, theme. Their
 * bodies are held to VISITOR_FORM_LIMIT_BYTES (413) before any form action reads them, so nobody can
 * make the server buffer adapter-node's whole BODY_SIZE_LIMIT without an account. The API is not
 * covered here: each API route has its own limit, and signed-in forms (uploads) keep the larger one.
 */
export const VISITOR_FORM_LIMIT_BYTES = 16 * 1024;

const WRITES = new Set(['POST', 'PUT', 'PATCH', 'DELETE']);

export const handleVisitorFormLimit: Handle = async ({ event, resolve }) => {
	const { request, url } = event;
	if (event.locals.user || !WRITES.has(request.method) || url.pathname.startsWith('/api/')) return resolve(event);
	let body: Uint8Array;
	try {
		body = await readBodyWithLimit(request, VISITOR_FORM_LIMIT_BYTES, 'leave');
	} catch (caught) {
		if (!isHttpError(caught) || caught.status !== 413) throw caught;
		return new Response(
			`This form sent more than ${VISITOR_FORM_LIMIT_BYTES / 1024} KiB, the most a visitor's form may send. ` +
				'Sign in to send larger forms.\n',
			{ status: 413, headers: { 'content-type': 'text/plain; charset=utf-8', connection: 'close' } }
		);
	}
	// The body is read now; the form action reads this copy.
	event.request = new Request(request.url, {
		method: request.method,
		headers: request.headers,
		body: body.byteLength > 0 ? (body as Uint8Array<ArrayBuffer>) : null,
		signal: request.signal
	});
	return resolve(event);
};
