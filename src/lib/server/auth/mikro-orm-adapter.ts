import type { EntityManager } from '@mikro-orm/postgresql';
import type { Adapter, DatabaseSession, DatabaseUser } from 'lucia';
import { Session, type SessionEntity, type UserEntity } from '../entities/index';

export interface SessionAttributes {
	userAgent: string | null;
	clientAddress: string | null;
	createdAt: Date;
}

export interface UserAttributes {
	email: string;
	displayName: string;
	roles: UserEntity['roles'];
	suspendedAt: Date | null;
}

function toDatabaseSession(row: SessionEntity): DatabaseSession {
	return {
		id: row.id,
		userId: row.user.id,
		expiresAt: row.expiresAt,
		attributes: { userAgent: row.userAgent ?? null, clientAddress: row.clientAddress ?? null, createdAt: row.createdAt }
	};
}

function toDatabaseUser(row: UserEntity): DatabaseUser {
	return {
		id: row.id,
		attributes: {
			email: row.email,
			displayName: row.displayName,
			roles: row.roles,
			suspendedAt: row.suspendedAt ?? null
		}
	};
}

/**
 * lucia's storage interface over MikroORM. Each call works in a fresh fork, so the adapter never
 * shares an identity map with a request; sessions are written with native queries (no flush of
 * unrelated changes).
 */
export class MikroOrmAdapter implements Adapter {
	constructor(private readonly fork: () => EntityManager) {}

	async getSessionAndUser(sessionId: string): Promise<[DatabaseSession | null, DatabaseUser | null]> {
		const row = await this.fork().findOne(Session, { id: sessionId }, { populate: ['user'] });
		if (!row) return [null, null];
		return [toDatabaseSession(row), toDatabaseUser(row.user)];
	}

	async getUserSessions(userId: string): Promise<DatabaseSession[]> {
		const rows = await this.fork().find(Session, { user: userId }, { orderBy: { createdAt: 'desc' } });
		return rows.map(toDatabaseSession);
	}

	async setSession(session: DatabaseSession): Promise<void> {
		const attributes = session.attributes as Partial<SessionAttributes>;
		await this.fork().insert(Session, {
			id: session.id,
			user: session.userId,
			expiresAt: session.expiresAt,
			createdAt: new Date(),
			userAgent: attributes.userAgent?.slice(0, 300) ?? null,
			clientAddress: attributes.clientAddress?.slice(0, 64) ?? null
		});
	}

	async updateSessionExpiration(sessionId: string, expiresAt: Date): Promise<void> {
		await this.fork().nativeUpdate(Session, { id: sessionId }, { expiresAt });
	}

	async deleteSession(sessionId: string): Promise<void> {
		await this.fork().nativeDelete(Session, { id: sessionId });
	}

	async deleteUserSessions(userId: string): Promise<void> {
		await this.fork().nativeDelete(Session, { user: userId });
	}

	async deleteExpiredSessions(): Promise<void> {
		await this.fork().nativeDelete(Session, { expiresAt: { $lte: new Date() } });
	}
}
