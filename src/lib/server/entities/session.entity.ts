import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { User } from './user.entity';

export const Session = defineEntity({
	name: 'Session',
	tableName: 'app_session',
	properties: (p) => ({
		/** sha256 of the session token, hex; the token itself only ever lives in the cookie. */
		id: p.string().length(64).primary(),
		user: p.manyToOne(User).deleteRule('cascade'),
		expiresAt: p.datetime().index(),
		createdAt: p.datetime().onCreate(() => new Date()),
		/** Shown on the account page so a person can tell their sessions apart. */
		userAgent: p.string().length(300).nullable(),
		clientAddress: p.string().length(64).nullable()
	})
});

export type SessionEntity = InferEntity<typeof Session>;
