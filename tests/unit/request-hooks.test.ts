import type { RequestEvent } from '@sveltejs/kit';
import { describe, expect, test, vi } from 'vitest';
import { handleAuth, handleGuard } from '../../src/lib/server/auth/request-hooks';

vi.mock('../../src/lib/server/db', () => ({
	getOrm: () => Promise.reject(new Error('the database was touched'))
}));

/** An EntityManager stand-in that fails on any use. */
const untouchable = new Proxy(
	{},
	{
		get: () => {
			throw new Error('the EntityManager was used');
		}
	}
);

function fakeEvent(url: string, routeId: string, headers: Record<string, string> = {}, cookie?: string): RequestEvent {
	return {
		url: new URL(url),
		route: { id: routeId },
		params: {},
		request: new Request(url, { headers }),
		locals: { em: untouchable },
		cookies: {
			get: (name: string) => (name === 'candlebook_session' ? cookie : undefined),
			set: () => {},
			delete: () => {}
		},
		getClientAddress: () => '127.0.0.1'
	} as unknown as RequestEvent;
}

const ok = () => Promise.resolve(new Response('ok'));

describe('anonymous requests do no database work', () => {
	test.each([
		['http://127.0.0.1/', '/'],
		['http://127.0.0.1/api/v1/groups', '/api/v1/groups'],
		['http://127.0.0.1/sign-in', '/sign-in']
	])('%s passes the auth hook and the guard without a database', async (url, routeId) => {
		const event = fakeEvent(url, routeId);
		const response = await handleAuth({ event, resolve: (e) => handleGuard({ event: e, resolve: ok }) });
		expect(await response.text()).toBe('ok');
		expect(event.locals.user).toBeNull();
	});

	test('an anonymous request for a protected API route is answered 401 without a database', async () => {
		const event = fakeEvent('http://127.0.0.1/api/v1/me', '/api/v1/me');
		const response = await handleAuth({ event, resolve: (e) => handleGuard({ event: e, resolve: ok }) });
		expect(response.status).toBe(401);
		expect(response.headers.get('content-type')).toContain('application/problem+json');
	});

	test('a request with a session cookie does consult the sessions (the control case)', async () => {
		const event = fakeEvent('http://127.0.0.1/', '/', {}, 'some-token');
		await expect(handleAuth({ event, resolve: ok })).rejects.toThrow(/database was touched/);
	});

	test('a bearer header on a page route is ignored (tokens are for the API)', async () => {
		const event = fakeEvent('http://127.0.0.1/', '/', { authorization: 'Bearer cbk_x' });
		const response = await handleAuth({ event, resolve: ok });
		expect(await response.text()).toBe('ok');
	});
});

describe('credentials that are present but empty or malformed are bad credentials, not anonymity', () => {
	const run = (event: RequestEvent) => handleAuth({ event, resolve: (e) => handleGuard({ event: e, resolve: ok }) });

	test.each([
		['an empty Authorization header', ''],
		['a bare Bearer', 'Bearer '],
		['Bearer without a space', 'Bearer'],
		['another scheme', 'Basic dXNlcjpwYXNz'],
		['a bearer value that is no Candlebook token', 'Bearer alice']
	])('%s on a public API route is refused 401 without a database', async (_label, authorization) => {
		const event = fakeEvent('http://127.0.0.1/api/v1/relations', '/api/v1/relations', { authorization });
		const response = await run(event);
		expect(response.status).toBe(401);
		expect(response.headers.get('content-type')).toContain('application/problem+json');
		expect((await response.json()).detail).toContain('Authorization');
		expect(event.locals.user).toBeNull();
	});

	test('an empty session cookie on a public API route is refused 401 without a database', async () => {
		const event = fakeEvent('http://127.0.0.1/api/v1/relations', '/api/v1/relations', {}, '');
		const response = await run(event);
		expect(response.status).toBe(401);
		expect(response.headers.get('content-type')).toContain('application/problem+json');
	});

	test('an empty session cookie on a page is dropped without a database', async () => {
		const event = fakeEvent('http://127.0.0.1/', '/', {}, '');
		const response = await run(event);
		expect(await response.text()).toBe('ok');
		expect(event.locals.user).toBeNull();
	});
});
