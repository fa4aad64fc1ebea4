import { describe, expect, test } from 'vitest';
import {
	answerSize,
	ImmutableCache,
	isStorable,
	matchesIfNoneMatch,
	type StoredAnswer
} from '../../src/lib/server/edge/immutable-cache';

const PUBLIC = { 'cache-control': 'public, max-age=31536000, immutable', 'content-type': 'application/json' };

function answer(bytes: number, etag = '"sha256:x"'): StoredAnswer {
	return { headers: [['etag', etag]], body: Buffer.alloc(bytes, 0x61), etag };
}

describe('what the front server may store', () => {
	test('only a 200 the app marked public and immutable, with no cookie and no Vary', () => {
		expect(isStorable(200, PUBLIC)).toBe(true);
		expect(isStorable(200, { 'cache-control': 'max-age=31536000,immutable,public' })).toBe(true);
		expect(isStorable(304, PUBLIC)).toBe(false);
		expect(isStorable(404, PUBLIC)).toBe(false);
		expect(isStorable(200, { 'cache-control': 'public, max-age=60' })).toBe(false);
		expect(isStorable(200, { 'cache-control': 'private, no-cache' })).toBe(false);
		expect(isStorable(200, { 'cache-control': 'public, immutable, private' })).toBe(false);
		expect(isStorable(200, { 'cache-control': 'public, immutable, no-store' })).toBe(false);
		expect(isStorable(200, {})).toBe(false);
		expect(isStorable(200, { ...PUBLIC, 'set-cookie': ['session=abc'] })).toBe(false);
		expect(isStorable(200, { ...PUBLIC, vary: 'Authorization, Cookie' })).toBe(false);
		expect(isStorable(200, { ...PUBLIC, 'content-encoding': 'gzip' })).toBe(false);
	});

	test('If-None-Match uses the weak comparison of RFC 9110 §13.1.2, lists and *', () => {
		const etag = '"sha256:abc"';
		expect(matchesIfNoneMatch('"sha256:abc"', etag)).toBe(true);
		expect(matchesIfNoneMatch('W/"sha256:abc"', etag)).toBe(true);
		expect(matchesIfNoneMatch('"other", "sha256:abc"', etag)).toBe(true);
		expect(matchesIfNoneMatch('*', etag)).toBe(true);
		expect(matchesIfNoneMatch('"sha256:abd"', etag)).toBe(false);
		expect(matchesIfNoneMatch(undefined, etag)).toBe(false);
		expect(matchesIfNoneMatch('*', null)).toBe(false);
	});
});

describe('the immutable cache', () => {
	test('keeps answers by exact request target', () => {
		const cache = new ImmutableCache({ maxBytes: 1_000_000 });
		const stored = answer(1400);
		expect(cache.set('/api/v1/pins/a@1', stored)).toBe(true);
		expect(cache.get('/api/v1/pins/a@1')).toBe(stored);
		expect(cache.get('/api/v1/pins/a@1?x=1')).toBeUndefined();
		expect(cache.get('/api/v1/pins/a@2')).toBeUndefined();
	});

	test('never holds more bytes than allowed, dropping the least recently used first', () => {
		const entry = answerSize('/v/00', answer(1000));
		const cache = new ImmutableCache({ maxBytes: entry * 3, maxEntryBytes: entry });
		for (const key of ['/v/00', '/v/01', '/v/02']) cache.set(key, answer(1000));
		cache.get('/v/00'); // now the most recently used
		cache.set('/v/03', answer(1000));
		expect(cache.bytes).toBeLessThanOrEqual(entry * 3);
		expect(cache.get('/v/01')).toBeUndefined();
		expect(cache.get('/v/00')).toBeDefined();
		expect(cache.get('/v/03')).toBeDefined();

		for (let i = 10; i < 200; i++) cache.set(`/v/${i}`, answer(1000));
		expect(cache.bytes).toBeLessThanOrEqual(entry * 3);
		expect(cache.size).toBe(3);
	});

	test('refuses a single answer larger than an entry may be, and stores nothing when given no memory', () => {
		const cache = new ImmutableCache({ maxBytes: 100_000, maxEntryBytes: 2_000 });
		expect(cache.set('/big', answer(5_000))).toBe(false);
		expect(cache.get('/big')).toBeUndefined();
		const off = new ImmutableCache({ maxBytes: 0 });
		expect(off.enabled).toBe(false);
		expect(off.set('/a', answer(10))).toBe(false);
	});
});
