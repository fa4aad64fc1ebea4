import { json } from '@sveltejs/kit';
import { calibratorSetWithRevisions } from '$lib/server/registry/calibrator-set-reads';
import { calibratorSetDetailToWire } from '$lib/server/registry/calibrator-set-wire';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import type { RequestHandler } from './$types';

/** One calibrator set with every revision (no rows); 404 for a private set the caller may not see. */
export const GET: RequestHandler = ({ locals, params }) =>
	registryResponse(async () => {
		const reader = readerOf(locals);
		const { set, revisions } = await calibratorSetWithRevisions(locals.em, reader, params.slug);
		return json(calibratorSetDetailToWire(set, revisions), {
			headers: {
				'cache-control': set.visibility === 'public' ? 'public, max-age=60' : 'private, no-cache',
				vary: 'Authorization, Cookie'
			}
		});
	});
