import { json } from '@sveltejs/kit';
import type { RequestHandler } from './$types';
import { checkReadiness } from '$lib/server/readiness';

/** Readiness: the database is reachable and every migration is applied. */
export const GET: RequestHandler = async ({ locals }) => {
	const readiness = await checkReadiness(locals.em);
	return json(
		{ status: readiness.ready ? 'ready' : 'not_ready', checks: readiness.checks },
		{ status: readiness.ready ? 200 : 503, headers: { 'cache-control': 'no-store' } }
	);
};
