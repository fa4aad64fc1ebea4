import type { EntityManager } from '@mikro-orm/core';
import type { EntityManager as PgEntityManager } from '@mikro-orm/postgresql';
import { Seeder } from '@mikro-orm/seeder';
import { seedDemoRegistry } from '../src/lib/server/registry/demo-registry';
import { ObjectStorage } from '../src/lib/server/storage/object-storage';
import { DEMO_ACCOUNTS, DEMO_GROUP } from './demo-accounts';

/**
 * The invented registry demo (calibrator sets, relations, versions, proposals), once. Its uploads go
 * to the object store named by S3_*; without one the registry demo is left out and says so.
 */
export class DemoRegistrySeeder extends Seeder {
	async run(em: EntityManager): Promise<void> {
		const env = process.env;
		if (!env.S3_ACCESS_KEY_ID || !env.S3_SECRET_ACCESS_KEY) {
			console.log('[candlebook] no object store configured (S3_*): the registry demo is not loaded');
			return;
		}
		const storage = new ObjectStorage({
			endpoint: env.S3_ENDPOINT,
			region: env.S3_REGION ?? 'us-east-1',
			bucket: env.S3_BUCKET ?? 'candlebook-uploads',
			accessKeyId: env.S3_ACCESS_KEY_ID,
			secretAccessKey: env.S3_SECRET_ACCESS_KEY,
			forcePathStyle: (env.S3_FORCE_PATH_STYLE ?? 'true') === 'true'
		});
		const byRole = (role: 'curator' | 'reviewer') =>
			DEMO_ACCOUNTS.find((account) => account.roles.includes(role))!.email;
		try {
			await seedDemoRegistry(
				em as PgEntityManager,
				storage,
				{ curator: byRole('curator'), reviewer: byRole('reviewer') },
				DEMO_GROUP.slug
			);
		} finally {
			storage.destroy();
		}
	}
}
