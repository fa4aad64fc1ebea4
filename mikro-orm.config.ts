import { Migrator } from '@mikro-orm/migrations';
import { defineConfig } from '@mikro-orm/postgresql';
import { SeedManager } from '@mikro-orm/seeder';
import { ENTITIES } from './src/lib/server/entities/index';

/**
 * One configuration for the app, the CLI and the operational scripts. It reads `process.env` directly
 * because the CLI runs outside Vite; the app validates the same variables at start-up.
 */
export default defineConfig({
	// The CLI creates and applies migrations, so it connects as the owner role when one is named.
	clientUrl: process.env.DATABASE_OWNER_URL ?? process.env.DATABASE_URL,
	entities: ENTITIES,
	extensions: [Migrator, SeedManager],
	discovery: { warnWhenNoEntities: true },
	debug: process.env.MIKRO_ORM_DEBUG === 'true',
	allowGlobalContext: false,
	migrations: {
		path: './migrations',
		pathTs: './migrations',
		glob: '!(*.d).{js,ts}',
		transactional: true,
		allOrNothing: true,
		snapshot: false,
		emit: 'ts'
	},
	seeder: {
		path: './seeds',
		pathTs: './seeds',
		defaultSeeder: 'DatabaseSeeder',
		glob: '!(*.d).{js,ts}',
		emit: 'ts'
	},
	pool: { min: 0, max: 10 }
});
