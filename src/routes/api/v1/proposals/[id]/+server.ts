import { json } from '@sveltejs/kit';
import { actorOf, readRegistryJson, registryResponse, uuidParam } from '$lib/server/registry/http';
import { editProposal, getProposal } from '$lib/server/registry/proposals';
import { EditProposalSchema } from '$lib/server/registry/schemas';
import { proposalToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/** The proposal with its comparison against the base version, its comments and what the caller may do. */
export const GET: RequestHandler = (event) =>
	registryResponse(async () => {
		const view = await getProposal(event.locals.em, actorOf(event.locals), uuidParam(event.params.id, 'proposal'));
		return json(proposalToWire(view));
	});

export const PATCH: RequestHandler = (event) =>
	registryResponse(async () => {
		const id = uuidParam(event.params.id, 'proposal');
		const body = await readRegistryJson(event, EditProposalSchema);
		const actor = actorOf(event.locals);
		await editProposal(event.locals.em, actor, id, {
			fit: body.fit,
			title: body.title,
			rationale: body.rationale,
			embargoUntil: body.embargo_until
		});
		return json(proposalToWire(await getProposal(event.locals.em.fork(), actor, id)));
	});
