import { json } from '@sveltejs/kit';
import { actorOf, readRegistryJson, registryResponse, uuidParam } from '$lib/server/registry/http';
import { getProposal, reviewProposal } from '$lib/server/registry/proposals';
import { ReviewSchema } from '$lib/server/registry/schemas';
import { proposalToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/**
 * A reviewer's decision. An approval that reaches the threshold freezes the next version; when the
 * proposal's base is no longer current the answer is 409 stale-base and the proposal stays in review.
 */
export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const id = uuidParam(event.params.id, 'proposal');
		const body = await readRegistryJson(event, ReviewSchema);
		const actor = actorOf(event.locals);
		const outcome = await reviewProposal(event.locals.em, actor, id, body.decision, body.comment);
		const view = proposalToWire(await getProposal(event.locals.em.fork(), actor, id));
		const headers: Record<string, string> = outcome.frozen
			? { location: `/api/v1/relations/${view.relation}/versions/${outcome.frozen.version}` }
			: {};
		return json({ ...view, frozen_version: outcome.frozen }, { status: 201, headers });
	});
