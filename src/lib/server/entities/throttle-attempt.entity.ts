import { defineEntity, type InferEntity } from '@mikro-orm/core';

/**
 * One counted attempt (a sign-in, a reset request) against a throttle key such as
 * `sign-in:account:ada@example.org` or `password-reset:client:203.0.113.9`. Kept in the database so that
 * every app instance counts together, and so that checking and recording happen under one lock.
 */
export const ThrottleAttempt = defineEntity({
	name: 'ThrottleAttempt',
	tableName: 'app_throttle_attempt',
	indexes: [{ properties: ['key', 'attemptedAt'] }],
	properties: (p) => ({
		id: p.bigint().primary().autoincrement(),
		key: p.string().length(400),
		attemptedAt: p.datetime()
	})
});

export type ThrottleAttemptEntity = InferEntity<typeof ThrottleAttempt>;
