import { describe, expect, test } from 'vitest';
import { problemBody } from '../../src/lib/server/api/problem';
import { parseConfig } from '../../src/lib/server/config';
import { TOO_MANY_REQUESTS_TITLE, TOO_MANY_REQUESTS_TYPE } from '../../src/lib/server/edge/front-server';
import { FixedWindowLimiter, rateLimitHeaders } from '../../src/lib/server/edge/rate-limit';

function clock(start = 1_000_000) {
	let now = start;
	return { now: () => now, advance: (ms: number) => (now += ms) };
}

describe('anonymous rate limit', () => {
	test('allows the quota in a window, refuses the rest, and starts afresh when the window ends', () => {
		const time = clock();
		const limiter = new FixedWindowLimiter({ name: 'anonymous', limit: 3, windowSeconds: 60 }, time.now);
		expect([1, 2, 3].map(() => limiter.take('192.0.2.1').remaining)).toEqual([2, 1, 0]);
		const refused = limiter.take('192.0.2.1');
		expect(refused).toEqual({ allowed: false, remaining: 0, resetSeconds: 60 });
		// Another address has its own quota.
		expect(limiter.take('192.0.2.2').allowed).toBe(true);

		time.advance(59_400);
		expect(limiter.take('192.0.2.1')).toEqual({ allowed: false, remaining: 0, resetSeconds: 1 });
		time.advance(600);
		expect(limiter.take('192.0.2.1')).toEqual({ allowed: true, remaining: 2, resetSeconds: 60 });
	});

	test('forgets clients whose window has ended', () => {
		const time = clock();
		const limiter = new FixedWindowLimiter({ name: 'anonymous', limit: 5, windowSeconds: 10 }, time.now);
		for (let i = 0; i < 100; i++) limiter.take(`198.51.100.${i}`);
		expect(limiter.trackedClients).toBe(100);
		time.advance(10_000);
		limiter.take('203.0.113.9');
		expect(limiter.trackedClients).toBe(1);
	});

	test('advertises the policy and state as draft-ietf-httpapi-ratelimit-headers-10 structured fields', () => {
		const policy = { name: 'anonymous', limit: 300, windowSeconds: 60 };
		const headers = rateLimitHeaders(policy, { allowed: true, remaining: 299, resetSeconds: 42 });
		// The draft's field definitions (from memory): RateLimit-Policy items carry q = quota and w = window
		// in seconds, RateLimit items r = remaining quota and t = seconds until reset; item names are Strings.
		expect(headers).toEqual({ 'ratelimit-policy': '"anonymous";q=300;w=60', ratelimit: '"anonymous";r=299;t=42' });
	});

	test('the 429 answer uses the same problem type and title as the app', () => {
		const body = problemBody(429);
		expect(TOO_MANY_REQUESTS_TYPE).toBe(body.type);
		expect(TOO_MANY_REQUESTS_TITLE).toBe(body.title);
	});

	test('is configured as requests/seconds, 0 switching it off', () => {
		const base = { DATABASE_URL: 'postgres://u:p@127.0.0.1:5432/db' };
		expect(parseConfig(base).CANDLEBOOK_ANON_RATE_LIMIT).toEqual({ limit: 300, windowSeconds: 60 });
		expect(parseConfig({ ...base, CANDLEBOOK_ANON_RATE_LIMIT: '20/1' }).CANDLEBOOK_ANON_RATE_LIMIT).toEqual({
			limit: 20,
			windowSeconds: 1
		});
		expect(parseConfig({ ...base, CANDLEBOOK_ANON_RATE_LIMIT: '0' }).CANDLEBOOK_ANON_RATE_LIMIT).toBeNull();
		for (const bad of ['300', '300/0', '-1/60', 'lots'])
			expect(() => parseConfig({ ...base, CANDLEBOOK_ANON_RATE_LIMIT: bad })).toThrow(/CANDLEBOOK_ANON_RATE_LIMIT/);
		expect(() => parseConfig({ ...base, DATABASE_READ_URL: 'mysql://x' })).toThrow(/DATABASE_READ_URL/);
	});
});
