import { json } from '@sveltejs/kit';
import { encodeCursor, parseListQuery } from '$lib/server/api/export-schemas';
import { listVisibleCalibratorSets } from '$lib/server/registry/calibrator-set-reads';
import { calibratorSetSummaryToWire } from '$lib/server/registry/calibrator-set-wire';
import { createCalibratorSet } from '$lib/server/registry/calibrator-sets';
import { actorOf, readerOf, readRegistryJson, registryResponse } from '$lib/server/registry/http';
import { CreateCalibratorSetSchema } from '$lib/server/registry/schemas';
import { calibratorSetToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/** The calibrator sets the caller may see, by slug: `?q=` searches slug, title and description. */
export const GET: RequestHandler = (event) =>
	registryResponse(async () => {
		const query = parseListQuery(event.url.searchParams);
		const reader = readerOf(event.locals);
		const page = await listVisibleCalibratorSets(event.locals.em, reader, query);
		return json(
			{
				items: page.items.map(calibratorSetSummaryToWire),
				next_cursor: page.nextAfter ? encodeCursor(page.nextAfter) : null
			},
			{
				headers: { 'cache-control': reader ? 'private, no-cache' : 'public, max-age=60', vary: 'Authorization, Cookie' }
			}
		);
	});

export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const body = await readRegistryJson(event, CreateCalibratorSetSchema);
		const set = await createCalibratorSet(event.locals.em, actorOf(event.locals), body);
		return json(calibratorSetToWire(set), {
			status: 201,
			headers: { location: `/api/v1/calibrator-sets/${set.slug}` }
		});
	});
