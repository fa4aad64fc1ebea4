import type { EntityManager } from '@mikro-orm/postgresql';
import type { CatalogueFilter, CatalogueItem, CataloguePage } from '../../catalogue/filters';
import type { Actor } from '../registry/actor';
import { catalogueRowToWire } from '../registry/read-wire';
import { decodeCursor, encodeCursor, listRelations } from '../registry/relation-catalogue';

/**
 * The catalogue list for the page's first render: exactly what `GET /api/v1/relations` answers for the
 * same filter (the same statement, items and cursor), so the client can take over from the API at
 * any page. A cursor that does not fit the sort starts from the first page.
 */
export async function listCatalogue(
	em: EntityManager,
	actor: Actor | null,
	filter: CatalogueFilter
): Promise<CataloguePage> {
	const after = filter.cursor ? decodeCursor(filter.sort, filter.cursor) : null;
	const page = await listRelations(em, actor, {
		band: filter.band ?? undefined,
		population: filter.population ?? undefined,
		anchor: filter.anchor ?? undefined,
		state: filter.state ?? undefined,
		q: filter.q || undefined,
		sort: filter.sort,
		after,
		limit: filter.limit
	});
	return {
		items: page.rows.map((row) => catalogueRowToWire(row) as CatalogueItem),
		next_cursor: page.nextAfter ? encodeCursor(filter.sort, page.nextAfter) : null
	};
}
