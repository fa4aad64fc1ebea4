import { json } from '@sveltejs/kit';
import { actorOf, readRegistryJson, registryResponse } from '$lib/server/registry/http';
import { createRelation } from '$lib/server/registry/relations';
import { CreateRelationSchema } from '$lib/server/registry/schemas';
import { relationToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

export const POST: RequestHandler = (event) =>
	registryResponse(async () => {
		const body = await readRegistryJson(event, CreateRelationSchema);
		const relation = await createRelation(event.locals.em, actorOf(event.locals), {
			slug: body.slug,
			title: body.title,
			description: body.description,
			band: body.band,
			population: body.population,
			anchorType: body.anchor_type,
			group: body.group,
			visibility: body.visibility,
			requiredApprovals: body.required_approvals,
			magnitudeSystem: body.magnitude_system
		});
		return json(relationToWire(relation, null), {
			status: 201,
			headers: { location: `/api/v1/relations/${relation.slug}` }
		});
	});
