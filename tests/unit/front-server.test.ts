import type { AddressInfo } from 'node:net';
import type { IncomingMessage, Server, ServerResponse } from 'node:http';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { createFrontServer, type EdgeLogEntry } from '../../src/lib/server/edge/front-server';
import { ImmutableCache } from '../../src/lib/server/edge/immutable-cache';
import { FixedWindowLimiter } from '../../src/lib/server/edge/rate-limit';

/**
 * The front server over real sockets, in front of a small stand-in for the SvelteKit handler that
 * answers like the pinned-version route does (public immutable, or private and varying by credentials)
 * and counts how often it was reached.
 */
const appCalls: string[] = [];
const BODY = JSON.stringify({ digest: 'sha256:0011', slope: -3.3, zero_point: -5.9 });

function standInApp(request: IncomingMessage, response: ServerResponse) {
	appCalls.push(request.url!);
	const url = request.url!;
	// Headers set with setHeader and written with writeHead(status), as SvelteKit's setResponse does.
	if (url.startsWith('/api/v1/pins/public')) {
		response.setHeader('content-type', 'application/json');
		response.setHeader('etag', '"sha256:0011"');
		response.setHeader('content-digest', 'sha-256=:AAAA:');
		response.setHeader('cache-control', 'public, max-age=31536000, immutable');
		response.writeHead(200);
		response.write(BODY.slice(0, 10));
		response.end(BODY.slice(10));
	} else if (url.startsWith('/api/v1/pins/cookie-setting')) {
		response.setHeader('cache-control', 'public, max-age=31536000, immutable');
		response.setHeader('set-cookie', 'session=fresh');
		response.writeHead(200).end(BODY);
	} else {
		const who = request.headers.authorization ?? request.headers.cookie ?? 'nobody';
		response.setHeader('cache-control', 'private, no-cache');
		response.setHeader('vary', 'Authorization, Cookie');
		response.writeHead(200).end(JSON.stringify({ who }));
	}
}

let server: Server;
let limited: Server;
let base: string;
let limitedBase: string;

async function listen(target: Server): Promise<string> {
	await new Promise<void>((resolve) => target.listen(0, '127.0.0.1', resolve));
	return `http://127.0.0.1:${(target.address() as AddressInfo).port}`;
}

beforeAll(async () => {
	const addressSource = { header: '', xffDepth: 1 };
	server = createFrontServer({
		app: standInApp,
		cache: new ImmutableCache({ maxBytes: 1_000_000 }),
		limiter: null,
		addressSource
	});
	limited = createFrontServer({
		app: standInApp,
		cache: new ImmutableCache({ maxBytes: 1_000_000 }),
		limiter: new FixedWindowLimiter({ name: 'anonymous', limit: 2, windowSeconds: 60 }),
		addressSource
	});
	base = await listen(server);
	limitedBase = await listen(limited);
});

afterAll(async () => {
	for (const target of [server, limited]) {
		target.closeAllConnections();
		await new Promise((resolve) => target.close(resolve));
	}
});

const callsTo = (path: string) => appCalls.filter((call) => call === path).length;

describe('front server', () => {
	test('keeps idle connections longer than a load balancer idles (60 s, common practice) and announces it', async () => {
		expect(server.keepAliveTimeout).toBeGreaterThan(60_000);
		expect(server.headersTimeout).toBeGreaterThan(server.keepAliveTimeout);
		const response = await fetch(`${base}/healthz`);
		await response.arrayBuffer();
		expect(response.headers.get('keep-alive')).toMatch(/timeout=6[1-9]/);
	});

	test('a public immutable answer reaches the app once and is replayed byte for byte', async () => {
		const path = '/api/v1/pins/public@1';
		const first = await fetch(base + path);
		const firstBody = Buffer.from(await first.arrayBuffer());
		const second = await fetch(base + path);
		const secondBody = Buffer.from(await second.arrayBuffer());
		expect(callsTo(path)).toBe(1);
		expect(secondBody.equals(firstBody)).toBe(true);
		expect(firstBody.toString()).toBe(BODY);
		for (const name of ['content-type', 'etag', 'content-digest', 'cache-control', 'access-control-allow-origin'])
			expect(second.headers.get(name), name).toBe(first.headers.get(name));
		expect(first.headers.get('cache-status')).toBe('candlebook-edge; fwd=miss');
		expect(second.headers.get('cache-status')).toBe('candlebook-edge; hit');
		expect(second.headers.get('content-length')).toBe(String(firstBody.length));

		const head = await fetch(base + path, { method: 'HEAD' });
		expect(head.status).toBe(200);
		expect(head.headers.get('etag')).toBe('"sha256:0011"');
		const notModified = await fetch(base + path, { headers: { 'if-none-match': 'W/"sha256:0011"' } });
		expect(notModified.status).toBe(304);
		expect(notModified.headers.get('etag')).toBe('"sha256:0011"');
		expect(await notModified.text()).toBe('');
		expect(callsTo(path)).toBe(1);
	});

	test('requests with credentials always reach the app, and what it says privately is never stored', async () => {
		const publicPath = '/api/v1/pins/public@2';
		await fetch(base + publicPath);
		await fetch(base + publicPath, { headers: { cookie: 'candlebook_session=abc' } });
		await fetch(base + publicPath, { headers: { authorization: 'Bearer cbk_x' } });
		expect(callsTo(publicPath)).toBe(3);

		const privatePath = '/api/v1/pins/private@1';
		const asAlice = await fetch(base + privatePath, { headers: { authorization: 'Bearer alice' } });
		expect(await asAlice.json()).toEqual({ who: 'Bearer alice' });
		const asNobody = await fetch(base + privatePath);
		expect(await asNobody.json()).toEqual({ who: 'nobody' });
		await fetch(base + privatePath);
		expect(callsTo(privatePath)).toBe(3);

		const cookiePath = '/api/v1/pins/cookie-setting@1';
		await fetch(base + cookiePath);
		await fetch(base + cookiePath);
		expect(callsTo(cookiePath)).toBe(2);
	});

	test('answers CORS preflights for reads itself and marks API reads for any origin', async () => {
		const preflight = await fetch(base + '/api/v1/pins/public@1', {
			method: 'OPTIONS',
			headers: { origin: 'https://pipeline.example', 'access-control-request-method': 'GET' }
		});
		expect(preflight.status).toBe(204);
		expect(preflight.headers.get('access-control-allow-origin')).toBe('*');
		expect(preflight.headers.get('access-control-allow-headers')).toContain('Authorization');
		expect(preflight.headers.get('access-control-allow-credentials')).toBeNull();
		const page = await fetch(base + '/relations');
		expect(page.headers.get('access-control-allow-origin')).toBeNull();
	});

	test('limits anonymous API calls per address, cached or not, and never token holders', async () => {
		const path = '/api/v1/pins/public@9';
		const answers = [];
		for (let i = 0; i < 3; i++) answers.push(await fetch(limitedBase + path));
		expect(answers.map((answer) => answer.status)).toEqual([200, 200, 429]);
		expect(answers[0].headers.get('ratelimit-policy')).toBe('"anonymous";q=2;w=60');
		expect(answers[1].headers.get('ratelimit')).toMatch(/^"anonymous";r=0;t=\d+$/);
		expect(answers[1].headers.get('cache-status')).toBe('candlebook-edge; hit');
		const refused = answers[2];
		expect(refused.headers.get('content-type')).toBe('application/problem+json');
		expect(Number(refused.headers.get('retry-after'))).toBeGreaterThan(0);
		expect(refused.headers.get('access-control-allow-origin')).toBe('*');
		expect(await refused.json()).toMatchObject({ type: '/docs/problems#too-many-requests', status: 429 });

		const withToken = await fetch(limitedBase + path, { headers: { authorization: 'Bearer cbk_x' } });
		expect(withToken.status).toBe(200);
		expect(withToken.headers.get('ratelimit')).toBeNull();
		// Pages are not counted.
		expect((await fetch(limitedBase + '/relations')).status).toBe(200);
	});

	test.each([
		['an empty Authorization header', ''],
		['a bare Bearer', 'Bearer '],
		['another scheme', 'Basic dXNlcjpwYXNz']
	])('%s is counted against the anonymous limit', async (_label, authorization) => {
		const counted = createFrontServer({
			app: standInApp,
			cache: new ImmutableCache({ maxBytes: 0 }),
			limiter: new FixedWindowLimiter({ name: 'anonymous', limit: 1, windowSeconds: 60 }),
			addressSource: { header: '', xffDepth: 1 }
		});
		const origin = await listen(counted);
		try {
			const statuses = [];
			for (let i = 0; i < 2; i++) {
				const response = await fetch(`${origin}/api/v1/pins/private@2`, { headers: { authorization } });
				await response.arrayBuffer();
				statuses.push(response.status);
			}
			expect(statuses).toEqual([200, 429]);
		} finally {
			counted.closeAllConnections();
			await new Promise((resolve) => counted.close(resolve));
		}
	});

	test('writes what it answers itself to the request log, without the query string; the app logs the rest', async () => {
		const edgeLog: EdgeLogEntry[] = [];
		const logged = createFrontServer({
			app: standInApp,
			cache: new ImmutableCache({ maxBytes: 1_000_000 }),
			limiter: new FixedWindowLimiter({ name: 'anonymous', limit: 2, windowSeconds: 60 }),
			addressSource: { header: '', xffDepth: 1 },
			log: (entry) => edgeLog.push(entry)
		});
		const origin = await listen(logged);
		try {
			const path = '/api/v1/pins/public@10';
			for (let i = 0; i < 3; i++) await (await fetch(`${origin}${path}?token=secret`)).arrayBuffer();
			expect(edgeLog.map(({ durationMs: _ms, ...entry }) => entry)).toEqual([
				{ method: 'GET', path, status: 200, answeredBy: 'edge-cache' },
				{ method: 'GET', path, status: 429, answeredBy: 'rate-limit' }
			]);
			expect(edgeLog.every((entry) => entry.durationMs >= 0 && entry.durationMs < 1000)).toBe(true);
		} finally {
			logged.closeAllConnections();
			await new Promise((resolve) => logged.close(resolve));
		}
	});
});
