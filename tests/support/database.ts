import { MikroORM } from '@mikro-orm/postgresql';
import config from '../../mikro-orm.config';

function openOrm(variable: 'DATABASE_URL' | 'DATABASE_OWNER_URL'): Promise<MikroORM> {
	const url = process.env[variable];
	if (!url) throw new Error(`${variable} is not set: run integration tests through \`npm test\``);
	return MikroORM.init({ ...config, clientUrl: url, debug: false });
}

/** An ORM on the test database that `npm test` created and migrated, as the app's runtime role. */
export function openTestOrm(): Promise<MikroORM> {
	return openOrm('DATABASE_URL');
}

/** The same database as the owner role: for tests that clean or truncate tables, or change the schema. */
export function openOwnerTestOrm(): Promise<MikroORM> {
	return openOrm('DATABASE_OWNER_URL');
}
