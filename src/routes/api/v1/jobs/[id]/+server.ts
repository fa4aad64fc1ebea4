import { json } from '@sveltejs/kit';
import { findVisibleFitJob } from '$lib/server/registry/proposals';
import { actorOf, registryResponse, uuidParam } from '$lib/server/registry/http';
import { jobToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/** A background job's state, progress (0 to 1) and, once it has succeeded, its result. */
export const GET: RequestHandler = (event) =>
	registryResponse(async () => {
		const job = await findVisibleFitJob(event.locals.em, actorOf(event.locals), uuidParam(event.params.id, 'job'));
		return json(jobToWire(job), { headers: { 'cache-control': 'no-store' } });
	});
