import { error } from '@sveltejs/kit';
import { atomFeed } from '$lib/publishing/atom';
import { RegistryError } from '$lib/server/registry/errors';
import { readerOf } from '$lib/server/registry/http';
import { relationFeed } from '$lib/server/registry/relation-feed';
import type { RequestHandler } from './$types';

/** Atom (RFC 4287) feed of the relation's new versions and deprecations. */
export const GET: RequestHandler = async ({ locals, params, url }) => {
	try {
		const feed = await relationFeed(locals.em, readerOf(locals), params.slug, url.origin);
		return new Response(atomFeed(feed), {
			headers: {
				'content-type': 'application/atom+xml; charset=utf-8',
				vary: 'Authorization, Cookie',
				'cache-control': 'private, max-age=300'
			}
		});
	} catch (failure) {
		if (failure instanceof RegistryError && failure.status === 404) error(404, failure.message);
		throw failure;
	}
};
