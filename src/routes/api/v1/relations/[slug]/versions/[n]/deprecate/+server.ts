import { json } from '@sveltejs/kit';
import { actorOf, readRegistryJson, registryResponse, versionParam } from '$lib/server/registry/http';
import { DeprecateSchema } from '$lib/server/registry/schemas';
import { deprecateVersion, findVersion } from '$lib/server/registry/versions';
import { versionToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const number = versionParam(event.params.n);
		const actor = actorOf(event.locals);
		await findVersion(event.locals.em, actor, event.params.slug, number);
		const body = await readRegistryJson(event, DeprecateSchema);
		const lifecycle = await deprecateVersion(event.locals.em, actor, event.params.slug, number, body);
		return json(versionToWire(event.params.slug, lifecycle));
	});
