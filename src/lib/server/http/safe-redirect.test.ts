import { afterAll, describe, expect, test } from 'vitest';
import { sitePath } from './safe-redirect';

/**
 * Redirect targets taken from a request. Browsers strip tab and newline from URLs and read `\` as `/`
 * (WHATWG URL Standard, "special" schemes), so `/\t/x` and `/\x` mean `//x`: another host.
 */
const started = performance.now();

describe('a redirect target from the request stays on this site', () => {
	test.each([
		['/relations/kestrel-lantern-w-vi', '/relations/kestrel-lantern-w-vi'],
		['/groups/kestrel?tab=members#people', '/groups/kestrel?tab=members#people'],
		['/search?q=a%2Fb', '/search?q=a%2Fb'],
		['/stars/V%20Cen', '/stars/V%20Cen'],
		['/', '/']
	])('the path %j is kept', (value, expected) => {
		expect(sitePath(value)).toBe(expected);
	});

	test.each([
		'//evil.example/x',
		'/\t/evil.example',
		'/\n/evil.example',
		'/\r\n/evil.example',
		'/\\evil.example',
		'\\/\\/evil.example',
		'/%2F/evil.example',
		'/%2f/evil.example',
		'%2F%2Fevil.example',
		'/%5Cevil.example',
		'/%252F/evil.example',
		'/%09/evil.example',
		'https://evil.example/',
		'HTTPS://evil.example/',
		'http:evil.example',
		'javascript:alert(1)',
		' /x',
		'/x\u0000',
		'x/y',
		'?next=/x',
		'/%E0%A4%A',
		'/' + 'a'.repeat(3000)
	])('%j lands on /', (value) => {
		expect(sitePath(value)).toBe('/');
	});

	test.each([null, undefined, ''])('an absent target (%j) takes the fallback', (value) => {
		expect(sitePath(value, '/account')).toBe('/account');
		expect(sitePath(value)).toBe('/');
	});

	test('a refused target lands on /, not on the fallback', () => {
		expect(sitePath('//evil.example', '/account')).toBe('/');
	});
});

afterAll(() => {
	console.log(`safe-redirect unit tests: ${Math.round(performance.now() - started)} ms`);
});
