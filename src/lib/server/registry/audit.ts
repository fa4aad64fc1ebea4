import type { EntityManager } from '@mikro-orm/postgresql';
import { AuditEvent } from '../entities/index';
import type { RegistryAuditKind } from '../entities/registry-audit-kinds';
import type { Actor } from './actor';

/** Appends an audit event in the caller's transaction, so it commits (or not) with the change itself. */
export async function auditRegistry(
	em: EntityManager,
	kind: RegistryAuditKind,
	actor: Actor | null,
	subject: string,
	detail: Record<string, unknown> = {}
): Promise<void> {
	await em.insert(AuditEvent, {
		kind,
		occurredAt: new Date(),
		actorId: actor?.id ?? null,
		subject: subject.slice(0, 320),
		clientAddress: null,
		detail
	});
}
