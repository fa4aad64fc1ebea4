import { afterAll, describe, expect, test } from 'vitest';
import { isLoopbackHost, publicOriginProblem } from '../../src/lib/server/config';

const started = performance.now();
afterAll(() => console.log(`public-origin unit tests: ${Math.round(performance.now() - started)} ms`));

describe('a server other machines can reach needs ORIGIN', () => {
	// Loopback is 127.0.0.0/8 and ::1 (RFC 1122 §3.2.1.3, RFC 4291 §2.5.3); 0.0.0.0 and :: mean every interface.
	test.each(['127.0.0.1', '127.8.9.10', 'localhost', '::1', '[::1]', '::ffff:127.0.0.1'])('%s is loopback', (host) => {
		expect(isLoopbackHost(host)).toBe(true);
	});
	test.each(['0.0.0.0', '::', '192.168.1.20', 'candlebook.example.org', '128.0.0.1', '127.0.0.1.evil.example'])(
		'%s is not loopback',
		(host) => expect(isLoopbackHost(host)).toBe(false)
	);

	test('HOST=0.0.0.0 without ORIGIN is refused with the variable named and an example', () => {
		const problem = publicOriginProblem({ HOST: '0.0.0.0' }, '127.0.0.1');
		expect(problem).toMatch(/^ORIGIN is required when HOST \(0\.0\.0\.0\)/);
		expect(problem).toContain('e.g. ORIGIN=https://');
	});

	test('with ORIGIN, or on loopback, there is nothing to say', () => {
		expect(publicOriginProblem({ HOST: '0.0.0.0', ORIGIN: 'https://candlebook.example.org' }, '127.0.0.1')).toBeNull();
		expect(publicOriginProblem({}, '127.0.0.1')).toBeNull();
		expect(publicOriginProblem({ HOST: '127.0.0.1' }, '0.0.0.0')).toBeNull();
	});

	test('an unset HOST takes the entry point’s own default', () => {
		expect(publicOriginProblem({}, '0.0.0.0')).not.toBeNull();
	});
});
