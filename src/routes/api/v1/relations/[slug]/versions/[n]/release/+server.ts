import { json } from '@sveltejs/kit';
import { actorOf, registryResponse, versionParam } from '$lib/server/registry/http';
import { releaseVersion } from '$lib/server/registry/versions';
import { versionToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/** Ends a version's embargo now (managers of the owning group, admins). */
export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const lifecycle = await releaseVersion(
			event.locals.em,
			actorOf(event.locals),
			event.params.slug,
			versionParam(event.params.n)
		);
		return json(versionToWire(event.params.slug, lifecycle));
	});
