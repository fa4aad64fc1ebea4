import { describe, expect, test } from 'vitest';
import { safeNext } from '../../src/lib/server/auth/request-context';

describe('the way back after signing in', () => {
	test.each([
		['/account', '/account'],
		['/groups/kestrel?tab=members', '/groups/kestrel?tab=members'],
		['//evil.example/', '/'],
		['/\\evil.example', '/'],
		['/\t/evil.example', '/'],
		['/%2F/evil.example', '/'],
		['https://evil.example/', '/'],
		['', '/account'],
		[null, '/account']
	])('%j leads to %j', (next, expected) => {
		expect(safeNext(next)).toBe(expected);
	});
});
