import type { EntityManager } from '@mikro-orm/core';
import { Seeder } from '@mikro-orm/seeder';
import { DemoAccountsSeeder } from './DemoAccountsSeeder';
import { DemoRegistrySeeder } from './DemoRegistrySeeder';

/** The invented demo that `npm start` loads. Every seeder it calls is idempotent. */
export class DatabaseSeeder extends Seeder {
	async run(em: EntityManager): Promise<void> {
		return this.call(em, [DemoAccountsSeeder, DemoRegistrySeeder]);
	}
}
