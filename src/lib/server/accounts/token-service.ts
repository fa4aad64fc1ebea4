import type { EntityManager } from '@mikro-orm/postgresql';
import { ApiToken, type TokenScope } from '../entities/index';
import { API_TOKEN_PREFIX, generateApiToken, hashSecret } from '../auth/secrets';
import { recordAudit, type AuditContext } from './audit';

const DAY_IN_MS = 86_400_000;
// Writing last-used on every request would turn each API read into a write; a minute is precise enough.
const LAST_USED_RESOLUTION_MS = 60_000;

export interface NewToken {
	name: string;
	scopes: TokenScope[];
	/** Days until it expires; null for a token that does not expire. */
	lifetimeDays: number | null;
}

/** Creates a token; the returned secret is shown once and never stored. */
export async function createToken(em: EntityManager, userId: string, input: NewToken, audit: AuditContext) {
	const secret = generateApiToken();
	const token = em.create(ApiToken, {
		user: userId,
		name: input.name,
		secretHash: hashSecret(secret),
		hint: secret.slice(0, API_TOKEN_PREFIX.length + 6),
		scopes: input.scopes,
		expiresAt: input.lifetimeDays === null ? null : new Date(Date.now() + input.lifetimeDays * DAY_IN_MS)
	});
	await em.flush();
	await recordAudit(em, 'token-created', {
		...audit,
		subject: token.id,
		detail: { owner: userId, name: token.name, scopes: token.scopes }
	});
	return { secret, token };
}

export async function listTokens(em: EntityManager, userId?: string) {
	return em.find(ApiToken, userId ? { user: userId } : {}, {
		populate: ['user'],
		orderBy: { revokedAt: 'desc nulls first', createdAt: 'desc' }
	});
}

/** Revokes a token at once. With `ownerId`, only a token of that person; returns false if none. */
export async function revokeToken(
	em: EntityManager,
	tokenId: string,
	ownerId: string | null,
	audit: AuditContext
): Promise<boolean> {
	const where = ownerId ? { id: tokenId, user: ownerId, revokedAt: null } : { id: tokenId, revokedAt: null };
	const revoked = await em.nativeUpdate(ApiToken, where, { revokedAt: new Date() });
	if (revoked === 0) return false;
	await recordAudit(em, 'token-revoked', { ...audit, subject: tokenId });
	return true;
}

/** The token and its owner for a bearer secret, or null if unknown, revoked, expired or suspended. */
export async function authenticateToken(em: EntityManager, secret: string) {
	if (!secret.startsWith(API_TOKEN_PREFIX)) return null;
	const token = await em.findOne(ApiToken, { secretHash: hashSecret(secret) }, { populate: ['user'] });
	const now = new Date();
	if (!token || token.revokedAt || (token.expiresAt && token.expiresAt <= now) || token.user.suspendedAt) return null;
	if (!token.lastUsedAt || now.getTime() - token.lastUsedAt.getTime() > LAST_USED_RESOLUTION_MS) {
		await em.nativeUpdate(ApiToken, { id: token.id }, { lastUsedAt: now });
	}
	return token;
}
