import { describe, expect, test } from 'vitest';
import { SignInThrottle } from '../../src/lib/server/auth/throttle';

describe('sign-in throttling', () => {
	const limits = { perAccount: 3, perAddress: 5, windowMs: 60_000 };

	test('an account is held after its limit of failures, and released when the window passes', () => {
		let now = 1_000_000;
		const throttle = new SignInThrottle(limits, () => now);
		for (let attempt = 0; attempt < 3; attempt++) throttle.recordFailure('a@x.test', '10.0.0.1');
		const held = throttle.check('A@x.test', '10.0.0.2');
		expect(held).toEqual({ allowed: false, retryAfterSeconds: 60 });
		now += 60_001;
		expect(throttle.check('a@x.test', '10.0.0.2')).toEqual({ allowed: true });
	});

	test('an address is held after trying many accounts', () => {
		const throttle = new SignInThrottle(limits, () => 0);
		for (let attempt = 0; attempt < 5; attempt++) throttle.recordFailure(`u${attempt}@x.test`, '10.0.0.9');
		expect(throttle.check('fresh@x.test', '10.0.0.9').allowed).toBe(false);
		expect(throttle.check('fresh@x.test', '10.0.0.10').allowed).toBe(true);
	});

	test('a success clears the account count but not the address count', () => {
		const throttle = new SignInThrottle(limits, () => 0);
		for (let attempt = 0; attempt < 2; attempt++) throttle.recordFailure('b@x.test', '10.0.0.3');
		throttle.recordSuccess('b@x.test');
		throttle.recordFailure('b@x.test', '10.0.0.3');
		expect(throttle.check('b@x.test', '10.0.0.4').allowed).toBe(true);
	});
});
