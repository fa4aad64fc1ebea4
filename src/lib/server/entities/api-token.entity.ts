import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { User } from './user.entity';

export const TOKEN_SCOPES = ['read:private', 'write', 'review'] as const;
export type TokenScope = (typeof TOKEN_SCOPES)[number];

/** A bearer token for pipelines and scripts. Only its sha256 is stored; the token is shown once. */
export const ApiToken = defineEntity({
	name: 'ApiToken',
	tableName: 'app_api_token',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		user: p.manyToOne(User).deleteRule('cascade').index(),
		name: p.string().length(100),
		/** sha256 of the token, hex. */
		secretHash: p.string().length(64).unique(),
		/** The first characters of the token, so a person can recognise it in a list. */
		hint: p.string().length(16),
		scopes: p.array<TokenScope>().default('{}'),
		expiresAt: p.datetime().nullable(),
		lastUsedAt: p.datetime().nullable(),
		revokedAt: p.datetime().nullable(),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type ApiTokenEntity = InferEntity<typeof ApiToken>;
