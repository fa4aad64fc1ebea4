import { json } from '@sveltejs/kit';
import { actorOf, readRegistryJson, registryResponse } from '$lib/server/registry/http';
import { createProposal, getProposal } from '$lib/server/registry/proposals';
import { CreateProposalSchema } from '$lib/server/registry/schemas';
import { proposalToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const body = await readRegistryJson(event, CreateProposalSchema);
		const actor = actorOf(event.locals);
		const proposal = await createProposal(event.locals.em, actor, event.params.slug, {
			fit: body.fit,
			title: body.title,
			rationale: body.rationale,
			embargoUntil: body.embargo_until,
			submit: body.submit
		});
		const view = await getProposal(event.locals.em.fork(), actor, proposal.id);
		return json(proposalToWire(view), { status: 201, headers: { location: `/api/v1/proposals/${proposal.id}` } });
	});
