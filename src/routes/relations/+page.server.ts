import { parseCatalogueFilter } from '$lib/catalogue/filters';
import { listCatalogue } from '$lib/server/catalogue/relation-listing';
import { readerOf } from '$lib/server/registry/http';
import type { PageServerLoad } from './$types';

/** The first page, rendered on the server from the URL's filter; the client takes over from the API. */
export const load: PageServerLoad = async ({ locals, url }) => {
	const filter = parseCatalogueFilter(url.searchParams);
	return { filter, page: await listCatalogue(locals.em, readerOf(locals), filter) };
};
