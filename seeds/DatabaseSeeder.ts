import type { EntityManager } from '@mikro-orm/core';
import { Seeder } from '@mikro-orm/seeder';
import { DemoAccountsSeeder } from './DemoAccountsSeeder';
import { DemoRegistrySeeder } from './DemoRegistrySeeder';
import type { DemoCredential, DemoPasswords } from './demo-accounts';

/** How the demo accounts get their passwords, and the passwords issued (to be shown once). */
export type DemoSeedContext = {
	passwords: DemoPasswords;
	issued: DemoCredential[];
};

/** The invented demo that `npm start` loads. Every seeder it calls is idempotent. */
export class DatabaseSeeder extends Seeder {
	async run(em: EntityManager, context: Partial<DemoSeedContext> = {}): Promise<void> {
		const full: DemoSeedContext = { passwords: context.passwords ?? 'published', issued: context.issued ?? [] };
		return this.call(em, [DemoAccountsSeeder, DemoRegistrySeeder], full);
	}
}
