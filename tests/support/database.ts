import { MikroORM } from '@mikro-orm/postgresql';
import config from '../../mikro-orm.config';

/** An ORM on the test database that `npm test` created and migrated (DATABASE_URL). */
export async function openTestOrm(): Promise<MikroORM> {
	const url = process.env.DATABASE_URL;
	if (!url) throw new Error('DATABASE_URL is not set: run integration tests through `npm test`');
	return MikroORM.init({ ...config, clientUrl: url, debug: false });
}
