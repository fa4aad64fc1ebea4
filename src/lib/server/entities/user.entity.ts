import { defineEntity, type InferEntity } from '@mikro-orm/core';

export const ROLES = ['reader', 'curator', 'reviewer', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export const User = defineEntity({
	name: 'User',
	tableName: 'app_user',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		email: p.string().length(320).unique(),
		displayName: p.string().length(200),
		affiliation: p.string().length(300).nullable(),
		orcid: p.string().length(19).nullable(),
		// Never leaves the server: DTO mappers whitelist fields. Null until an invitation is accepted.
		passwordHash: p.text().nullable(),
		roles: p.array<Role>().default('{reader}'),
		createdAt: p.datetime().onCreate(() => new Date()),
		/** Set when the person first chose a password (accepting the invitation). */
		activatedAt: p.datetime().nullable(),
		/** A suspended account cannot sign in and its tokens stop working. */
		suspendedAt: p.datetime().nullable()
	})
});

export type UserEntity = InferEntity<typeof User>;
