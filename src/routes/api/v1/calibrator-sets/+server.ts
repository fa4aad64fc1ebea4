import { json } from '@sveltejs/kit';
import { createCalibratorSet } from '$lib/server/registry/calibrator-sets';
import { actorOf, readRegistryJson, registryResponse } from '$lib/server/registry/http';
import { CreateCalibratorSetSchema } from '$lib/server/registry/schemas';
import { calibratorSetToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const body = await readRegistryJson(event, CreateCalibratorSetSchema);
		const set = await createCalibratorSet(event.locals.em, actorOf(event.locals), body);
		return json(calibratorSetToWire(set), {
			status: 201,
			headers: { location: `/api/v1/calibrator-sets/${set.slug}` }
		});
	});
