import { hash } from '@node-rs/argon2';
import type { EntityManager } from '@mikro-orm/core';
import { Seeder } from '@mikro-orm/seeder';
import { User } from '../src/lib/server/entities/index';
import { DEMO_ACCOUNTS, DEMO_PASSWORD } from './demo-accounts';

/** Creates the invented demo accounts once; later runs leave existing accounts untouched. */
export class DemoAccountsSeeder extends Seeder {
	async run(em: EntityManager): Promise<void> {
		for (const account of DEMO_ACCOUNTS) {
			const existing = await em.findOne(User, { email: account.email });
			if (existing) continue;
			em.create(User, {
				...account,
				orcid: null,
				passwordHash: await hash(DEMO_PASSWORD)
			});
		}
		await em.flush();
	}
}
