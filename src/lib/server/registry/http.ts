import type { RequestEvent } from '@sveltejs/kit';
import { problem } from '../api/problem';
import { readJsonBody } from '../api/request-body';
import { getConfig } from '../config';
import type { z } from 'zod';
import { readsPrivate, type Actor } from './actor';
import { RegistryError } from './errors';

/** Glue between the registry services and SvelteKit's API routes. */

/**
 * The only place a request's credential becomes an Actor: a token's scopes decide here whether the
 * actor reaches group-private content (`readsPrivate`), and the services ask `maySeePrivateOf`.
 */
const toActor = (user: NonNullable<App.Locals['user']>, token: App.Locals['apiToken']): Actor => ({
	id: user.id,
	displayName: user.displayName,
	roles: user.roles,
	...(token ? { readsPrivate: token.scopes.includes('read:private') } : {})
});

/** The caller as an Actor; the access policy has already refused anonymous callers on these routes. */
export function actorOf(locals: App.Locals): Actor {
	if (!locals.user) throw new RegistryError(403, 'forbidden', 'Sign in, or send a valid API token.');
	return toActor(locals.user, locals.apiToken);
}

/**
 * The caller as a reader of possibly private content, or null for the public view. A token sees
 * private and embargoed content only with the read:private scope; without it, it reads as anonymous.
 */
export function readerOf(locals: App.Locals): Actor | null {
	if (!locals.user) return null;
	const actor = toActor(locals.user, locals.apiToken);
	return readsPrivate(actor) ? actor : null;
}

/** Runs a route body, answering a RegistryError as problem+json with its code (and any upload issues). */
export async function registryResponse(work: () => Promise<Response>): Promise<Response> {
	try {
		return await work();
	} catch (error) {
		if (!(error instanceof RegistryError)) throw error;
		return problem(error.status, error.message, {
			...(error.code === 'stale-base' ? { type: '/docs/problems#stale-base', title: 'Stale base version' } : {}),
			...(error.errors.length > 0 ? { errors: error.errors } : {}),
			code: error.code,
			...error.extra
		} as Record<string, unknown>);
	}
}

export function readRegistryJson<T extends z.ZodType>(event: RequestEvent, schema: T): Promise<z.infer<T>> {
	return readJsonBody(event.request, schema, getConfig().CANDLEBOOK_MAX_JSON_BYTES);
}

export const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** A route's id parameter, or 404 before any query (PostgreSQL refuses a malformed uuid). */
export function uuidParam(value: string | undefined, what: string): string {
	if (!value || !UUID.test(value)) throw new RegistryError(404, 'not-found', `There is no ${what} ${value ?? ''}.`);
	return value.toLowerCase();
}

export function versionParam(value: string | undefined): number {
	if (!value || !/^[1-9]\d{0,8}$/.test(value))
		throw new RegistryError(404, 'not-found', `There is no version ${value ?? ''}.`);
	return Number(value);
}
