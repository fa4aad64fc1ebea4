import { MikroORM } from '@mikro-orm/postgresql';
import config from '../../../mikro-orm.config';
import { getConfig } from './config';

let orm: Promise<MikroORM> | undefined;

/** The process-wide ORM, created on first use so that `vite build` never connects to a database. */
export function getOrm(): Promise<MikroORM> {
	orm ??= MikroORM.init({ ...config, clientUrl: getConfig().DATABASE_URL });
	return orm;
}

export async function closeOrm(): Promise<void> {
	if (!orm) return;
	const current = orm;
	orm = undefined;
	await (await current).close(true);
}
