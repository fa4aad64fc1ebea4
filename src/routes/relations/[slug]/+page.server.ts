import { orPageError } from '$lib/server/catalogue/page-errors';
import { loadRelationView } from '$lib/server/catalogue/relation-view';
import { readerOf } from '$lib/server/registry/http';
import { reproduceAction, watchAction } from './actions.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = ({ locals, params, url }) =>
	orPageError(async () => ({
		view: await loadRelationView(locals.em, readerOf(locals), params.slug, null, url.origin),
		signedIn: !!locals.user
	}));

export const actions: Actions = {
	watch: async (event) => watchAction(event, true),
	unwatch: async (event) => watchAction(event, false),
	reproduce: async (event) => reproduceAction(event)
};
