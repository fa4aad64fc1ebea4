import { hash } from '@node-rs/argon2';
import type { EntityManager } from '@mikro-orm/core';
import { Seeder } from '@mikro-orm/seeder';
import { Group, GroupMembership, User } from '../src/lib/server/entities/index';
import { DEMO_ACCOUNTS, DEMO_GROUP, DEMO_PASSWORD } from './demo-accounts';

/** Creates the invented demo accounts and group once; later runs leave existing rows untouched. */
export class DemoAccountsSeeder extends Seeder {
	async run(em: EntityManager): Promise<void> {
		const group = (await em.findOne(Group, { slug: DEMO_GROUP.slug })) ?? em.create(Group, { ...DEMO_GROUP });
		// Flushed one by one: ids are assigned on flush, and the membership checks query by them.
		await em.flush();
		for (const { demoGroup, ...account } of DEMO_ACCOUNTS) {
			let user = await em.findOne(User, { email: account.email });
			if (!user) {
				user = em.create(User, {
					...account,
					orcid: null,
					passwordHash: await hash(DEMO_PASSWORD),
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
