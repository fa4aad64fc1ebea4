import { hash, verify } from '@node-rs/argon2';
import { randomBytes } from 'node:crypto';
import type { EntityManager } from '@mikro-orm/core';
import { Seeder } from '@mikro-orm/seeder';
import { Group, GroupMembership, User } from '../src/lib/server/entities/index';
import type { DemoSeedContext } from './DatabaseSeeder';
import { DEMO_ACCOUNTS, DEMO_GROUP, DEMO_PASSWORD, type DemoCredential, type DemoPasswords } from './demo-accounts';

/** 20 URL-safe characters (120 random bits): above the sign-in form's 12-character minimum. */
function randomDemoPassword(): string {
	return randomBytes(15).toString('base64url');
}

async function passwordFor(mode: DemoPasswords, email: string, issued: DemoCredential[]): Promise<string> {
	if (mode === 'published') return hash(DEMO_PASSWORD);
	const password = randomDemoPassword();
	issued.push({ email, password });
	return hash(password);
}

/**
 * Gives every demo account that still signs in with the published password a random one instead
 * (pushed to `issued`): for a database first seeded on loopback and now served where others reach it.
 */
export async function replacePublishedDemoPasswords(em: EntityManager, issued: DemoCredential[]): Promise<void> {
	const users = await em.find(User, { email: { $in: DEMO_ACCOUNTS.map((account) => account.email) } });
	for (const user of users) {
		if (user.passwordHash && (await verify(user.passwordHash, DEMO_PASSWORD).catch(() => false))) {
			user.passwordHash = await passwordFor('random', user.email, issued);
		}
	}
	await em.flush();
}

/** Creates the invented demo accounts and group once; later runs leave existing rows untouched. */
export class DemoAccountsSeeder extends Seeder {
	async run(em: EntityManager, context?: Partial<DemoSeedContext>): Promise<void> {
		const mode = context?.passwords ?? 'published';
		const issued = context?.issued ?? [];
		if (mode === 'random') await replacePublishedDemoPasswords(em, issued);
		const group = (await em.findOne(Group, { slug: DEMO_GROUP.slug })) ?? em.create(Group, { ...DEMO_GROUP });
		// Flushed one by one: ids are assigned on flush, and the membership checks query by them.
		await em.flush();
		for (const { demoGroup, ...account } of DEMO_ACCOUNTS) {
			let user = await em.findOne(User, { email: account.email });
			if (!user) {
				user = em.create(User, {
					...account,
					orcid: null,
					passwordHash: await passwordFor(mode, account.email, issued),
					activatedAt: new Date()
				});
				await em.flush();
			}
			if (demoGroup && !(await em.count(GroupMembership, { group, user }))) {
				em.create(GroupMembership, { group, user, standing: demoGroup });
			}
		}
		await em.flush();
	}
}
