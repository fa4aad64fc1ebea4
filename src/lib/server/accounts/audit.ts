import type { EntityManager } from '@mikro-orm/postgresql';
import { AuditEvent, type AuditKind } from '../entities/index';

export interface AuditContext {
	actorId?: string | null;
	subject?: string | null;
	clientAddress?: string | null;
	detail?: Record<string, unknown>;
}

/** Appends an audit event at once (a native insert, independent of any pending flush). */
export async function recordAudit(em: EntityManager, kind: AuditKind, context: AuditContext = {}): Promise<void> {
	await em.insert(AuditEvent, {
		kind,
		occurredAt: new Date(),
		actorId: context.actorId ?? null,
		subject: context.subject?.slice(0, 320) ?? null,
		clientAddress: context.clientAddress?.slice(0, 64) ?? null,
		detail: context.detail ?? {}
	});
}
