import { json } from '@sveltejs/kit';
import { fieldErrors } from '$lib/server/api/errors';
import { RegistryError } from '$lib/server/registry/errors';
import { actorOf, registryResponse } from '$lib/server/registry/http';
import { listProposals } from '$lib/server/registry/proposals';
import { ProposalQuerySchema } from '$lib/server/registry/schemas';
import { proposalSummaryToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/** Proposals the caller may see: `?relation=slug`, `?state=in_review`, `?awaiting=me`. */
export const GET: RequestHandler = (event) =>
	registryResponse(async () => {
		const query = ProposalQuerySchema.safeParse(Object.fromEntries(event.url.searchParams));
		if (!query.success)
			throw new RegistryError(400, 'bad-query', 'The query does not match.', fieldErrors(query.error));
		const proposals = await listProposals(event.locals.em, actorOf(event.locals), query.data);
		return json({ proposals: proposals.map(proposalSummaryToWire) });
	});
