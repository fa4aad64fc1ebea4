import { MikroORM } from '@mikro-orm/postgresql';
import config from '../../../mikro-orm.config';
import { getConfig } from './config';

let orm: Promise<MikroORM> | undefined;
let readOrm: Promise<MikroORM> | undefined;

/** The process-wide ORM, created on first use so that `vite build` never connects to a database. */
export function getOrm(): Promise<MikroORM> {
	orm ??= MikroORM.init({ ...config, clientUrl: getConfig().DATABASE_URL });
	return orm;
}

/** `application_name` of the replica pool's connections, unless DATABASE_READ_URL names its own. */
export const READ_POOL_APPLICATION_NAME = 'candlebook-read';

/**
 * The ORM for read requests: with DATABASE_READ_URL set, its queries go to the read replica, while
 * any write it makes, and every query inside a transaction, still goes to the primary. Without a
 * replica it is the primary ORM itself.
 */
export function getReadOrm(): Promise<MikroORM> {
	const { DATABASE_URL, DATABASE_READ_URL } = getConfig();
	if (!DATABASE_READ_URL) return getOrm();
	readOrm ??= MikroORM.init({
		...config,
		clientUrl: DATABASE_URL,
		preferReadReplicas: true,
		replicas: [
			{
				name: 'read',
				clientUrl: DATABASE_READ_URL,
				// MikroORM keeps only host, port, credentials and database from a URL; the pg driver takes
				// the rest as connection options, so operators can tell the read pool apart.
				driverOptions: {
					connection: {
						application_name:
							new URL(DATABASE_READ_URL).searchParams.get('application_name') ?? READ_POOL_APPLICATION_NAME
					}
				}
			}
		]
	});
	return readOrm;
}

/**
 * Requests whose queries may go to the replica: reads of the read API. Writes, pages (which follow
 * form posts and must see what was just written) and everything else stay on the primary.
 */
export function usesReadReplica(method: string, pathname: string): boolean {
	return (method === 'GET' || method === 'HEAD') && pathname.startsWith('/api/v1/');
}

export async function closeOrm(): Promise<void> {
	const current = [orm, readOrm].filter((entry): entry is Promise<MikroORM> => entry !== undefined);
	orm = undefined;
	readOrm = undefined;
	await Promise.all(current.map(async (entry) => (await entry).close(true)));
}
