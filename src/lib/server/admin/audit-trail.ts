import type { EntityManager } from '@mikro-orm/postgresql';
import { z } from 'zod';
import { AuditEvent, User } from '../entities/index';
import { AUDIT_KINDS, type AuditKind } from '../entities/audit-event.entity';

/** The audit trail, filtered and paged for the administration browser. */
export const AUDIT_PAGE_SIZE = 50;

const day = z
	.string()
	.regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date like 2026-12-01.')
	.refine((value) => !Number.isNaN(Date.parse(`${value}T00:00:00Z`)), 'Not a calendar date.');

export const AuditQuerySchema = z.object({
	kind: z.enum(AUDIT_KINDS, { error: 'Choose a kind from the list.' }).optional(),
	actor: z.string().trim().max(320).optional(),
	subject: z.string().trim().max(320).optional(),
	from: day.optional(),
	to: day.optional(),
	page: z.coerce.number().int().min(1).max(100_000).default(1)
});
export type AuditQuery = z.infer<typeof AuditQuerySchema>;

/** The query string as a filter; empty fields are absent, and a bad field is reported, not guessed. */
export function auditQueryOf(params: URLSearchParams) {
	const raw = Object.fromEntries([...params].filter(([, value]) => value.trim() !== ''));
	const parsed = AuditQuerySchema.safeParse(raw);
	if (parsed.success) return { query: parsed.data, errors: {} as Record<string, string[]> };
	const errors: Record<string, string[]> = {};
	for (const issue of parsed.error.issues) (errors[String(issue.path[0])] ??= []).push(issue.message);
	return { query: { page: 1 } as AuditQuery, errors };
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const likePattern = (text: string) => `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;

/** Actor ids matching an id, an e-mail address or part of a display name. */
async function actorIds(em: EntityManager, actor: string): Promise<string[]> {
	if (UUID.test(actor)) return [actor.toLowerCase()];
	const people = await em.find(
		User,
		{ $or: [{ email: actor.toLowerCase() }, { displayName: { $ilike: likePattern(actor) } }] },
		{ fields: ['id'], limit: 100 }
	);
	return people.map((person) => person.id);
}

export async function auditPage(em: EntityManager, query: AuditQuery) {
	const where: Record<string, unknown> = {};
	if (query.kind) where.kind = query.kind;
	if (query.subject) where.subject = { $ilike: likePattern(query.subject) };
	if (query.actor) where.actorId = { $in: await actorIds(em, query.actor) };
	const occurred: Record<string, Date> = {};
	if (query.from) occurred.$gte = new Date(`${query.from}T00:00:00Z`);
	if (query.to) occurred.$lt = new Date(Date.parse(`${query.to}T00:00:00Z`) + 86_400_000);
	if (Object.keys(occurred).length) where.occurredAt = occurred;

	const [events, total] = await em.findAndCount(AuditEvent, where, {
		orderBy: { id: 'desc' },
		limit: AUDIT_PAGE_SIZE,
		offset: (query.page - 1) * AUDIT_PAGE_SIZE
	});
	const ids = [...new Set(events.map((event) => event.actorId).filter((id): id is string => !!id))];
	const people = ids.length ? await em.find(User, { id: { $in: ids } }, { fields: ['displayName', 'email'] }) : [];
	const byId = new Map(people.map((person) => [person.id, person]));
	return {
		events: events.map((event) => {
			const person = event.actorId ? byId.get(event.actorId) : undefined;
			return {
				id: String(event.id),
				kind: event.kind as AuditKind,
				occurredAt: event.occurredAt.toISOString(),
				actorId: event.actorId ?? null,
				actorName: person?.displayName ?? null,
				actorEmail: person?.email ?? null,
				subject: event.subject ?? null,
				clientAddress: event.clientAddress ?? null,
				detail: JSON.stringify(event.detail ?? {})
			};
		}),
		total,
		page: query.page,
		pages: Math.max(1, Math.ceil(total / AUDIT_PAGE_SIZE))
	};
}
