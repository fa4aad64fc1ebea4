import { pinnedVersionResponse } from '$lib/server/api/pinned-version';
import { readerOf, registryResponse } from '$lib/server/registry/http';
import { pinHref } from '$lib/server/registry/read-wire';
import { currentVersionFor } from '$lib/server/registry/relation-catalogue';
import type { RequestHandler } from './$types';

/**
 * The current version's exact pinned bytes. The target moves when a version is approved or deprecated,
 * so caches keep it a minute; `Content-Location` and the canonical link name the pin to keep.
 */
export const GET: RequestHandler = ({ locals, params, request, url }) =>
	registryResponse(async () => {
		const reader = readerOf(locals);
		const number = await currentVersionFor(locals.em, reader, params.slug);
		const pin = pinHref(params.slug, number);
		return pinnedVersionResponse(locals.em, reader, params.slug, number, request.headers.get('if-none-match'), {
			publicCacheControl: 'public, max-age=60',
			// Which version is current depends on who asks (an embargoed version is current only for its group).
			headers: {
				'content-location': pin,
				link: `<${url.origin}${pin}>; rel="canonical"`,
				vary: 'Authorization, Cookie'
			}
		});
	});
