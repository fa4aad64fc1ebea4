import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { User } from './user.entity';

export const LINK_PURPOSES = ['invitation', 'password-reset', 'email-change'] as const;
export type LinkPurpose = (typeof LINK_PURPOSES)[number];

/**
 * A single-use, expiring link sent by e-mail. The id is the sha256 of the secret in the link, so a
 * database reader cannot use a pending link.
 */
export const OneTimeLink = defineEntity({
	name: 'OneTimeLink',
	tableName: 'app_one_time_link',
	properties: (p) => ({
		id: p.string().length(64).primary(),
		purpose: p.enum([...LINK_PURPOSES]),
		user: p.manyToOne(User).deleteRule('cascade').index(),
		/** The address the link was sent to (for an address change: the new address). */
		email: p.string().length(320),
		expiresAt: p.datetime(),
		usedAt: p.datetime().nullable(),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type OneTimeLinkEntity = InferEntity<typeof OneTimeLink>;
