import { json } from '@sveltejs/kit';
import { actorOf, readRegistryJson, registryResponse, uuidParam } from '$lib/server/registry/http';
import { commentOnProposal, getProposal } from '$lib/server/registry/proposals';
import { CommentSchema } from '$lib/server/registry/schemas';
import { proposalToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const id = uuidParam(event.params.id, 'proposal');
		const body = await readRegistryJson(event, CommentSchema);
		const actor = actorOf(event.locals);
		await commentOnProposal(event.locals.em, actor, id, body.body);
		return json(proposalToWire(await getProposal(event.locals.em.fork(), actor, id)), { status: 201 });
	});
