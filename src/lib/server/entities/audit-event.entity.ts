import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { REGISTRY_AUDIT_KINDS } from './registry-audit-kinds';

export const AUDIT_KINDS = [
	'sign-in',
	'sign-in-failed',
	'sign-in-throttled',
	'sign-out',
	'sign-out-everywhere',
	'invitation-sent',
	'invitation-accepted',
	'password-reset-requested',
	'password-reset-throttled',
	'password-reset',
	'password-set',
	'email-change-requested',
	'email-changed',
	'user-created',
	'roles-changed',
	'account-suspended',
	'account-reinstated',
	'group-created',
	'group-member-added',
	'group-member-removed',
	'token-created',
	'token-revoked',
	...REGISTRY_AUDIT_KINDS
] as const;
export type AuditKind = (typeof AUDIT_KINDS)[number];

/**
 * An append-only record of security-relevant events. Actor and subject are kept as plain ids and
 * addresses, not foreign keys, so the record outlives the rows it mentions.
 */
export const AuditEvent = defineEntity({
	name: 'AuditEvent',
	tableName: 'app_audit_event',
	properties: (p) => ({
		id: p.bigint().primary().autoincrement(),
		// A plain string in the database: new kinds of event need no migration.
		kind: p.string().length(64).$type<AuditKind>().index(),
		occurredAt: p
			.datetime()
			.onCreate(() => new Date())
			.index(),
		actorId: p.uuid().nullable(),
		/** Whom or what the event is about: a user id, an e-mail address, a group slug, a token id. */
		subject: p.string().length(320).nullable(),
		clientAddress: p.string().length(64).nullable(),
		detail: p.json<Record<string, unknown>>().default('{}')
	})
});

export type AuditEventEntity = InferEntity<typeof AuditEvent>;
