import { json } from '@sveltejs/kit';
import { actorOf, registryResponse } from '$lib/server/registry/http';
import { watchRelation } from '$lib/server/registry/relations';
import type { RequestHandler } from './$types';

/** Watch a relation: mail on every new version and deprecation. DELETE stops watching. */
export const POST: RequestHandler = (event) =>
	registryResponse(async () =>
		json({ watching: await watchRelation(event.locals.em, actorOf(event.locals), event.params.slug, true) })
	);

export const DELETE: RequestHandler = (event) =>
	registryResponse(async () =>
		json({ watching: await watchRelation(event.locals.em, actorOf(event.locals), event.params.slug, false) })
	);
