import { json } from '@sveltejs/kit';
import { estimateHubble, HubbleRequestSchema } from '$lib/server/api/hubble';
import { readJsonBody } from '$lib/server/api/request-body';
import type { RequestHandler } from './$types';

/** Stateless: no database work, so anyone may call it. */
export const POST: RequestHandler = async ({ request }) => {
	const body = await readJsonBody(request, HubbleRequestSchema, 16 * 1024);
	return json(estimateHubble(body), { headers: { 'cache-control': 'no-store' } });
};
