import { MikroORM } from '@mikro-orm/postgresql';
import config from '../../../../mikro-orm.config';
import { DatabaseSeeder } from '../../../../seeds/DatabaseSeeder';

async function withOrm<T>(url: string, work: (orm: MikroORM) => Promise<T>): Promise<T> {
	const orm = await MikroORM.init({ ...config, clientUrl: url });
	try {
		return await work(orm);
	} finally {
		await orm.close(true);
	}
}

/** Applies every pending migration in one transaction; returns the names applied. */
export async function migrateDatabase(url: string): Promise<string[]> {
	return withOrm(url, async (orm) => {
		const applied = await orm.migrator.up();
		return applied.map((migration) => migration.name);
	});
}

/** Seeds the invented demo; the seeder is idempotent, so this is safe on every start. */
export async function seedDemo(url: string): Promise<void> {
	await withOrm(url, (orm) => orm.seeder.seed(DatabaseSeeder));
}
