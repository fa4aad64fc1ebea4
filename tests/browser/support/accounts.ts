import { hash } from '@node-rs/argon2';
import { MikroORM } from '@mikro-orm/postgresql';
import config from '../../../mikro-orm.config';
import { generateApiToken, generateSecret, hashSecret } from '../../../src/lib/server/auth/secrets';
import {
	ApiToken,
	Group,
	GroupMembership,
	Session,
	User,
	type GroupStanding,
	type Role,
	type TokenScope
} from '../../../src/lib/server/entities/index';

/**
 * Direct access to the database the app under test uses, to set up people, groups, sessions and
 * tokens without going through the pages being tested.
 */
export async function openOrm(): Promise<MikroORM> {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run browser tests through `npm test`');
	return MikroORM.init({ ...config, clientUrl: url, debug: false, pool: { min: 0, max: 4 } });
}

export const uniqueSlug = (label: string) => `${label}-${crypto.randomUUID().slice(0, 8)}`;

export async function createPerson(
	orm: MikroORM,
	options: { label: string; roles: Role[]; password?: string; groups?: { group: string; standing: GroupStanding }[] }
) {
	const em = orm.em.fork();
	const user = em.create(User, {
		email: `${uniqueSlug(options.label.replace(/\W+/g, '-'))}@browser.test`,
		displayName: `Test ${options.label}`,
		affiliation: null,
		orcid: null,
		roles: options.roles,
		// Cheapest argon2id the app accepts: these hashes only need to verify.
		passwordHash: options.password ? await hash(options.password, { memoryCost: 1024, timeCost: 1 }) : null,
		activatedAt: new Date()
	});
	await em.flush();
	for (const membership of options.groups ?? []) {
		const group = await em.findOneOrFail(Group, { slug: membership.group });
		em.create(GroupMembership, { group, user, standing: membership.standing });
	}
	await em.flush();
	return user;
}

export async function createGroupRow(orm: MikroORM, slug: string) {
	const em = orm.em.fork();
	em.create(Group, { slug, name: `Group ${slug}`, description: null });
	await em.flush();
	return slug;
}

/** A fresh browser session for the person; returns the cookie value. */
export async function createSessionCookie(orm: MikroORM, userId: string): Promise<string> {
	const token = generateSecret();
	await orm.em.fork().insert(Session, {
		id: hashSecret(token),
		user: userId,
		expiresAt: new Date(Date.now() + 86_400_000),
		createdAt: new Date(),
		userAgent: 'matrix',
		clientAddress: null
	});
	return token;
}

export async function createBearerToken(
	orm: MikroORM,
	userId: string,
	scopes: TokenScope[],
	state: 'active' | 'revoked' | 'expired' = 'active'
): Promise<string> {
	const secret = generateApiToken();
	const em = orm.em.fork();
	em.create(ApiToken, {
		user: userId,
		name: `matrix ${scopes.join(',') || 'no scope'}`,
		secretHash: hashSecret(secret),
		hint: secret.slice(0, 10),
		scopes,
		expiresAt: state === 'expired' ? new Date(Date.now() - 1000) : null,
		revokedAt: state === 'revoked' ? new Date() : null
	});
	await em.flush();
	return secret;
}
