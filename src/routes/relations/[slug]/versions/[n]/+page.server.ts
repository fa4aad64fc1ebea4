import { orPageError } from '$lib/server/catalogue/page-errors';
import { loadRelationView } from '$lib/server/catalogue/relation-view';
import { readerOf, versionParam } from '$lib/server/registry/http';
import { reproduceAction } from '../../actions.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = ({ locals, params, url }) =>
	orPageError(async () => ({
		view: await loadRelationView(locals.em, readerOf(locals), params.slug, versionParam(params.n), url.origin),
		signedIn: !!locals.user
	}));

export const actions: Actions = {
	reproduce: async (event) => reproduceAction(event)
};
