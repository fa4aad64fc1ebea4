import { MikroORM } from '@mikro-orm/postgresql';
import config from '../../../../mikro-orm.config';
import { DatabaseSeeder, type DemoSeedContext } from '../../../../seeds/DatabaseSeeder';
import type { DemoCredential, DemoPasswords } from '../../../../seeds/demo-accounts';
import { prepareJobQueue } from '../jobs/queue';
import { assertSeparateRoles, grantRuntimeAccess, roleOfUrl } from './database-roles';

export async function withOrm<T>(url: string, work: (orm: MikroORM) => Promise<T>): Promise<T> {
	const orm = await MikroORM.init({ ...config, clientUrl: url });
	try {
		return await work(orm);
	} finally {
		await orm.close(true);
	}
}

export interface MigrationTarget {
	/** The owner role, which runs the migrations and owns what they create. */
	ownerUrl: string;
	/** The runtime role the app connects as; it is granted row access to every table. */
	runtimeUrl: string;
}

/**
 * Applies every pending migration in one transaction as the owner role, creates or upgrades the job
 * queue's schema, and grants the runtime role its row access; returns the migrations applied.
 */
export async function migrateDatabase({ ownerUrl, runtimeUrl }: MigrationTarget): Promise<string[]> {
	const runtimeRole = roleOfUrl(runtimeUrl);
	return withOrm(ownerUrl, async (orm) => {
		await assertSeparateRoles(orm, runtimeRole);
		const applied = await orm.migrator.up();
		await prepareJobQueue(ownerUrl);
		await grantRuntimeAccess(orm, runtimeRole);
		return applied.map((migration) => migration.name);
	});
}

/**
 * Seeds the invented demo as the runtime role; the seeder is idempotent, so this is safe on every
 * start. With `random` passwords, demo accounts get passwords nobody has published, returned here
 * (and only here) for the caller to show once.
 */
export async function seedDemo(url: string, passwords: DemoPasswords = 'published'): Promise<DemoCredential[]> {
	return withOrm(url, async (orm) => {
		const context: DemoSeedContext = { passwords, issued: [] };
		const em = orm.em.fork();
		await new DatabaseSeeder().run(em, context);
		await em.flush();
		return context.issued;
	});
}
