import type {
	ApiTokenEntity,
	AuditEventEntity,
	GroupEntity,
	GroupMembershipEntity,
	SessionEntity,
	UserEntity
} from '../entities/index';

/** Entity → plain object mappers for pages and the API: fields are whitelisted, never spread. */
export function toProfileDto(user: UserEntity) {
	return {
		id: user.id,
		email: user.email,
		displayName: user.displayName,
		affiliation: user.affiliation ?? null,
		orcid: user.orcid ?? null,
		roles: [...user.roles]
	};
}

export function toPersonDto(user: UserEntity) {
	return {
		...toProfileDto(user),
		activated: !!user.passwordHash,
		suspended: !!user.suspendedAt,
		createdAt: user.createdAt.toISOString()
	};
}

export function toTokenDto(token: ApiTokenEntity) {
	const now = Date.now();
	return {
		id: token.id,
		name: token.name,
		hint: token.hint,
		scopes: [...token.scopes],
		createdAt: token.createdAt.toISOString(),
		expiresAt: token.expiresAt?.toISOString() ?? null,
		lastUsedAt: token.lastUsedAt?.toISOString() ?? null,
		revokedAt: token.revokedAt?.toISOString() ?? null,
		active: !token.revokedAt && (!token.expiresAt || token.expiresAt.getTime() > now)
	};
}

export function toSessionDto(session: SessionEntity, currentId: string | null) {
	return {
		// The id is the token's hash; a short prefix is enough to tell sessions apart on screen.
		id: session.id,
		label: session.id.slice(0, 8),
		userAgent: session.userAgent ?? null,
		clientAddress: session.clientAddress ?? null,
		createdAt: session.createdAt.toISOString(),
		expiresAt: session.expiresAt.toISOString(),
		current: session.id === currentId
	};
}

export function toGroupDto(group: GroupEntity) {
	return { slug: group.slug, name: group.name, description: group.description ?? null };
}

export function toMemberDto(membership: GroupMembershipEntity) {
	return {
		userId: membership.user.id,
		displayName: membership.user.displayName,
		email: membership.user.email,
		standing: membership.standing
	};
}

export function toAuditDto(event: AuditEventEntity) {
	return {
		id: String(event.id),
		kind: event.kind,
		occurredAt: event.occurredAt.toISOString(),
		actorId: event.actorId ?? null,
		subject: event.subject ?? null,
		clientAddress: event.clientAddress ?? null,
		detail: JSON.stringify(event.detail ?? {})
	};
}
