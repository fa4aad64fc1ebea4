import { json } from '@sveltejs/kit';
import { RelationListQuerySchema } from '$lib/server/api/read-schemas';
import { actorOf, readerOf, readRegistryJson, registryResponse } from '$lib/server/registry/http';
import { badParameter, parseQuery, VIEWER_DEPENDENT_HEADERS } from '$lib/server/registry/read-http';
import { catalogueRowToWire } from '$lib/server/registry/read-wire';
import { decodeCursor, encodeCursor, listRelations } from '$lib/server/registry/relation-catalogue';
import { createRelation } from '$lib/server/registry/relations';
import { CreateRelationSchema } from '$lib/server/registry/schemas';
import { relationToWire } from '$lib/server/registry/wire';
import type { RequestHandler } from './$types';

/** The catalogue: `?band=&population=&anchor=&state=&q=&sort=&cursor=&limit=`, keyset-paged. */
export const GET: RequestHandler = (event) =>
	registryResponse(async () => {
		const query = parseQuery(event.url, RelationListQuerySchema);
		const after = query.cursor === undefined ? null : decodeCursor(query.sort, query.cursor);
		if (query.cursor !== undefined && !after)
			throw badParameter('cursor', 'is not a cursor this listing gave out for this sort');
		const page = await listRelations(event.locals.em, readerOf(event.locals), { ...query, after });
		return json(
			{
				items: page.rows.map(catalogueRowToWire),
				next_cursor: page.nextAfter ? encodeCursor(query.sort, page.nextAfter) : null
			},
			{ headers: VIEWER_DEPENDENT_HEADERS }
		);
	});

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
