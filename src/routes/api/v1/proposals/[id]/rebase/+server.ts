import { json } from '@sveltejs/kit';
import { actorOf, registryResponse, uuidParam } from '$lib/server/registry/http';
import { getProposal, rebaseProposal } from '$lib/server/registry/proposals';
import { proposalToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const id = uuidParam(event.params.id, 'proposal');
		const actor = actorOf(event.locals);
		await rebaseProposal(event.locals.em, actor, id);
		return json(proposalToWire(await getProposal(event.locals.em.fork(), actor, id)));
	});
