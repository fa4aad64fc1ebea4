import type { MikroORM } from '@mikro-orm/postgresql';
import { Lucia, TimeSpan } from 'lucia';
import { getConfig, secureCookies } from '../config';
import { MikroOrmAdapter, type SessionAttributes, type UserAttributes } from './mikro-orm-adapter';

export const SESSION_COOKIE = 'candlebook_session';

export function createLucia(orm: MikroORM) {
	return new Lucia(new MikroOrmAdapter(() => orm.em.fork()), {
		// lucia renews a session once less than half of this remains.
		sessionExpiresIn: new TimeSpan(getConfig().CANDLEBOOK_SESSION_DAYS, 'd'),
		sessionCookie: {
			name: SESSION_COOKIE,
			attributes: { secure: secureCookies(), sameSite: 'lax', path: '/' }
		},
		getSessionAttributes: (attributes) => attributes,
		getUserAttributes: (attributes) => attributes
	});
}

export type CandlebookLucia = ReturnType<typeof createLucia>;

declare module 'lucia' {
	interface Register {
		Lucia: CandlebookLucia;
		DatabaseSessionAttributes: SessionAttributes;
		DatabaseUserAttributes: UserAttributes;
	}
}

const instances = new WeakMap<MikroORM, CandlebookLucia>();

/** One lucia per ORM (the app has one; tests may open their own). */
export function luciaFor(orm: MikroORM): CandlebookLucia {
	let lucia = instances.get(orm);
	if (!lucia) {
		lucia = createLucia(orm);
		instances.set(orm, lucia);
	}
	return lucia;
}
